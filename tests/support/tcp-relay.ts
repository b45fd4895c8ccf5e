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
  /**
   * A silent drop: open connections stay open but nothing passes either way (no reset, no close), as when
   * a cable is pulled or a switch dies. New ones connect and hang the same way. `restore` lets data through.
   */
  freeze(): void
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
  let frozen = false
  let accepted = 0
  const pairs = new Set<[Socket, Socket]>()

  const server: Server = createServer((client) => {
    if (cut) {
      client.destroy()
      return
    }
    accepted++
    const upstream = connect(target.port, target.host)
    sockets.add(client).add(upstream)
    const pair: [Socket, Socket] = [client, upstream]
    pairs.add(pair)
    if (frozen) {
      client.pause()
      upstream.pause()
    } else {
      client.pipe(upstream)
      upstream.pipe(client)
    }
    const end = () => {
      pairs.delete(pair)
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
    freeze() {
      frozen = true
      for (const pair of pairs) for (const s of pair) { s.unpipe(); s.pause() }
    },
    restore() {
      cut = false
      if (!frozen) return
      frozen = false
      for (const [client, upstream] of pairs) {
        client.pipe(upstream)
        upstream.pipe(client)
      }
    },
    get isCut() { return cut },
    get accepted() { return accepted },
    async close() {
      for (const s of sockets) s.destroy()
      await new Promise<void>(done => server.close(() => done()))
    },
  }
}
