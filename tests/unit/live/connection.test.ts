// The panel's link to /live against a real WebSocket server (the `ws` package) that speaks the protocol of
// shared/live/protocol.ts with states made by the real engine. Short delays keep the run quick.
import { afterEach, describe, expect, it } from 'vitest'
import WebSocket from 'ws'
import { emptyView } from '#shared/live/apply'
import { LiveConnection, type ConnectionState, type SocketLike } from '#shared/live/connection'
import type { ServerMessage } from '#shared/live/protocol'
import { DemoRun, SLUG, TAM } from '../../support/live-fixtures'
import { startLiveServer as startServer, type TestLiveServer as TestServer } from '../../support/live-server'

const open: LiveConnection[] = []
const servers: TestServer[] = []
afterEach(async () => {
  for (const c of open.splice(0)) c.stop()
  for (const s of servers.splice(0)) await s.close()
})

function connect(url: string, extra: Partial<ConstructorParameters<typeof LiveConnection>[0]> = {}) {
  const view = emptyView()
  const states: ConnectionState[] = []
  const messages: ServerMessage[] = []
  const link = new LiveConnection({
    url, layout: SLUG, view, createSocket: u => new WebSocket(u) as unknown as SocketLike,
    onState: s => states.push(s), onMessage: m => messages.push(m),
    backoffMs: [20, 40, 80], offlineAfter: 2, ...extra,
  })
  open.push(link)
  link.start()
  return { link, view, states, messages }
}

describe('LiveConnection', () => {
  it('subscribes to the layout and is live once the snapshot is in', async () => {
    const run = new DemoRun()
    run.occupy('UM2')
    const server = await startServer(run)
    servers.push(server)
    const { link, view, states, messages } = connect(server.url)
    await expect.poll(() => link.state).toBe('live')
    expect(states[0]).toBe('connecting')
    expect(server.received[0]).toEqual({ type: 'subscribe', layout: SLUG })
    expect(view.state).toEqual(run.liveState())
    expect(messages).toContainEqual({ type: 'welcome', user: TAM })
  })

  it('follows deltas, and on a gap sends resync and catches up from the new snapshot', async () => {
    const run = new DemoRun()
    const server = await startServer(run)
    servers.push(server)
    const { link, view } = connect(server.url)
    await expect.poll(() => link.state).toBe('live')
    server.broadcast(run.occupy('UM1'))
    await expect.poll(() => view.state.occupied.UM1).toBe(true)
    run.interpose('UM1', '2J01') // never sent: the panel misses seq 2
    server.broadcast(run.occupy('UM2'))
    await expect.poll(() => server.received.some(m => m.type === 'resync')).toBe(true)
    await expect.poll(() => view.seq).toBe(run.seq)
    expect(view.state).toEqual(run.liveState())
    expect(view.state.descriptions.UM2).toBe('2J01')
  })

  it('reads stale when the server goes quiet with the socket still open, and live again at its next word', async () => {
    const run = new DemoRun()
    const server = await startServer(run, { heartbeatMs: null })
    servers.push(server)
    const { link, states } = connect(server.url, { staleAfterMs: 150 })
    await expect.poll(() => link.state).toBe('live')
    await expect.poll(() => link.state, { timeout: 2000 }).toBe('stale')
    expect(server.clients.size).toBe(1)
    const serverAt = Date.now() + 60_000 // a server clock a minute ahead of this one
    server.broadcast({ type: 'heartbeat', at: serverAt })
    await expect.poll(() => link.state).toBe('live')
    expect(states.slice(-2)).toEqual(['stale', 'live'])
    // commands are stamped on the server's clock, as the heartbeat gave it
    expect(Math.abs(link.serverNow() - (Date.now() + 60_000))).toBeLessThan(1000)
  })

  it('reconnects after the link drops and takes a fresh snapshot with what it missed', async () => {
    const run = new DemoRun()
    const server = await startServer(run)
    servers.push(server)
    const { link, view, states } = connect(server.url)
    await expect.poll(() => link.state).toBe('live')
    for (const c of server.clients) c.terminate()
    run.occupy('DM1') // happens while the panel is away
    await expect.poll(() => states.includes('reconnecting')).toBe(true)
    await expect.poll(() => link.state).toBe('live')
    expect(server.received.filter(m => m.type === 'subscribe')).toHaveLength(2)
    expect(view.state.occupied.DM1).toBe(true)
  })

  it('reads offline after repeated failures and comes back live when the server returns', async () => {
    const run = new DemoRun()
    const first = await startServer(run)
    const port = first.port
    const { link } = connect(first.url)
    await expect.poll(() => link.state).toBe('live')
    await first.close()
    await expect.poll(() => link.state, { timeout: 3000 }).toBe('offline')
    servers.push(await startServer(run, { port }))
    await expect.poll(() => link.state, { timeout: 3000 }).toBe('live')
  })

  it('replaces a socket that has gone silent', async () => {
    const server = await startServer(new DemoRun(), { silent: true })
    servers.push(server)
    let sockets = 0
    connect(server.url, {
      silenceLimitMs: 60,
      createSocket: (u) => { sockets += 1; return new WebSocket(u) as unknown as SocketLike },
    })
    await expect.poll(() => sockets, { timeout: 3000 }).toBeGreaterThanOrEqual(3)
  })

  it('passes command results on and sends nothing once stopped', async () => {
    const server = await startServer(new DemoRun())
    servers.push(server)
    const { link, messages } = connect(server.url)
    await expect.poll(() => link.state).toBe('live')
    expect(link.send({ type: 'command', id: 'c1', command: { action: 'take-area', area: 'main' } })).toBe(true)
    await expect.poll(() => server.commands().map(c => c.id)).toEqual(['c1'])
    server.broadcast({ type: 'command-result', id: 'c1', ok: false, reason: 'stale revision' })
    await expect.poll(() => messages.find(m => m.type === 'command-result')).toEqual({ type: 'command-result', id: 'c1', ok: false, reason: 'stale revision' })
    link.stop()
    expect(link.state).toBe('idle')
    expect(link.send({ type: 'ping' })).toBe(false)
  })
})
