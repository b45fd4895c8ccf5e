// A TCP relay in front of the Blockbell server that can cut the network on purpose: every open connection
// (HTTP and the panel's WebSocket) is dropped at once and new ones are refused until it is restored. A
// browser that reaches the server through it sees what a tablet sees when the club's Wi-Fi goes down.
import { connect, createServer, type Server, type Socket } from 'node:net'

export interface TcpRelay {
  /** http://127.0.0.1:<relay port>, the address to open pages at. */
  url: string
  port: number
  /** Drops every connection now and refuses new ones. */
  cut(): void
  /** Lets connections through again. */
  restore(): void
  readonly isCut: boolean
  /** Connections accepted so far (each reconnect makes a new one). */
  readonly accepted: number
  close(): Promise<void>
}

export async function startTcpRelay(target: { host: string, port: number }): Promise<TcpRelay> {
  const sockets = new Set<Socket>()
  let cut = false
  let accepted = 0

  const server: Server = createServer((client) => {
    if (cut) {
      client.destroy()
      return
    }
    accepted++
    const upstream = connect(target.port, target.host)
    sockets.add(client).add(upstream)
    client.pipe(upstream)
    upstream.pipe(client)
    const end = () => {
      client.destroy()
      upstream.destroy()
      sockets.delete(client)
      sockets.delete(upstream)
    }
    client.on('close', end).on('error', end)
    upstream.on('close', end).on('error', end)
  })
  await new Promise<void>(done => server.listen(0, '127.0.0.1', done))
  const port = (server.address() as { port: number }).port

  return {
    url: `http://127.0.0.1:${port}`,
    port,
    cut() {
      cut = true
      for (const s of sockets) s.destroy()
      sockets.clear()
    },
    restore() { cut = false },
    get isCut() { return cut },
    get accepted() { return accepted },
    async close() {
      for (const s of sockets) s.destroy()
      await new Promise<void>(done => server.close(() => done()))
    },
  }
}
