// A small /live server for panel tests (the `ws` package): it answers subscribe and resync with the
// snapshot of a DemoRun (states made by the real engine) and lets the test send deltas and command results.
import WebSocket, { WebSocketServer } from 'ws'
import type { AddressInfo } from 'node:net'
import { HEARTBEAT_MS, type ClientMessage, type ServerMessage } from '#shared/live/protocol'
import type { SocketLike } from '#shared/live/connection'
import { type DemoRun, TAM } from './live-fixtures'

export interface TestLiveServer {
  url: string
  port: number
  received: ClientMessage[]
  clients: Set<WebSocket>
  /** Sends to every connected panel. */
  broadcast: (msg: ServerMessage) => void
  /** Opens a socket to this server whatever URL the panel asks for. */
  socketFactory: () => SocketLike
  commands: () => Extract<ClientMessage, { type: 'command' }>[]
  close: () => Promise<void>
}

/** `heartbeatMs`: how often to send a heartbeat to subscribed panels, as the real server does (null: never). */
export async function startLiveServer(run: DemoRun, opts: { port?: number, silent?: boolean, welcome?: ServerMessage, heartbeatMs?: number | null } = {}): Promise<TestLiveServer> {
  const wss = new WebSocketServer({ host: '127.0.0.1', port: opts.port ?? 0 })
  await new Promise(resolve => wss.once('listening', resolve))
  const received: ClientMessage[] = []
  const clients = new Set<WebSocket>()
  wss.on('connection', (ws) => {
    clients.add(ws)
    ws.on('close', () => clients.delete(ws))
    if (opts.silent) return
    ws.send(JSON.stringify(opts.welcome ?? { type: 'welcome', user: TAM }))
    ws.on('message', (data) => {
      const msg = JSON.parse(String(data)) as ClientMessage
      received.push(msg)
      if (msg.type === 'subscribe' || msg.type === 'resync') ws.send(JSON.stringify(run.snapshot()))
    })
  })
  const subscribed = new Set<WebSocket>()
  wss.on('connection', (ws) => {
    ws.on('message', (data) => { if ((JSON.parse(String(data)) as ClientMessage).type === 'subscribe') subscribed.add(ws) })
    ws.on('close', () => subscribed.delete(ws))
  })
  const heartbeatMs = opts.silent ? null : opts.heartbeatMs === undefined ? HEARTBEAT_MS : opts.heartbeatMs
  const heartbeat = heartbeatMs === null
    ? null
    : setInterval(() => {
        for (const c of subscribed) c.send(JSON.stringify({ type: 'heartbeat', at: Date.now() }))
      }, heartbeatMs)
  const port = (wss.address() as AddressInfo).port
  const url = `ws://127.0.0.1:${port}/live`
  return {
    url, port, received, clients,
    broadcast: (msg) => { for (const c of clients) c.send(JSON.stringify(msg)) },
    socketFactory: () => new WebSocket(url) as unknown as SocketLike,
    commands: () => received.filter((m): m is Extract<ClientMessage, { type: 'command' }> => m.type === 'command'),
    close: () => new Promise<void>((resolve) => {
      if (heartbeat) clearInterval(heartbeat)
      for (const c of clients) c.terminate()
      wss.close(() => resolve())
    }),
  }
}
