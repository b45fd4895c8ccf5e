// A TCP relay between a client and PostgreSQL that can lose a reply on purpose: the statement runs and
// commits on the server, but the client never hears so and sees its connection cut. That is what a network
// failure at the worst moment looks like to a writer, and the case its retry must survive.
import { createServer, connect, type Server, type Socket } from 'node:net'

export interface PostgresProxy {
  port: number
  /**
   * The next statement whose SQL contains `sqlText` completes on the server, then its connection is cut
   * before the reply reaches the client. Resolves once that has happened.
   */
  loseReplyTo(sqlText: string): Promise<void>
  /** Replies lost so far. */
  lost: number
  close(): Promise<void>
}

// PostgreSQL 15 documentation, 55.7 "Message Formats": ReadyForQuery is 'Z', Int32 length 5, one status
// byte. 55.2.3 "Extended Query": Sync closes (commits) the implicit transaction, then ReadyForQuery is sent,
// so once it arrives the statement's rows are committed.
function endsWithReadyForQuery(data: Buffer): boolean {
  const n = data.length
  return n >= 6 && data[n - 6] === 0x5a && data.readInt32BE(n - 5) === 5
}

export async function startPostgresProxy(target: { host: string, port: number }): Promise<PostgresProxy> {
  const sockets = new Set<Socket>()
  let armed: { sqlText: string, done: () => void } | null = null

  const server: Server = createServer((client) => {
    const upstream = connect(target.port, target.host)
    sockets.add(client).add(upstream)
    let swallowing: (() => void) | null = null // set while this connection's reply is to be lost

    client.on('data', (data: Buffer) => {
      if (armed && data.includes(armed.sqlText, 0, 'utf8')) {
        swallowing = armed.done
        armed = null
      }
      upstream.write(data)
    })
    upstream.on('data', (data: Buffer) => {
      if (!swallowing) { client.write(data); return }
      if (endsWithReadyForQuery(data)) {
        const done = swallowing
        client.destroy()
        upstream.destroy()
        proxy.lost++
        done()
      }
    })
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

  const proxy: PostgresProxy = {
    port: (server.address() as { port: number }).port,
    lost: 0,
    loseReplyTo(sqlText) {
      return new Promise((done) => { armed = { sqlText, done } })
    },
    async close() {
      for (const s of sockets) s.destroy()
      await new Promise<void>(done => server.close(() => done()))
    },
  }
  return proxy
}
