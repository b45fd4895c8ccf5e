import { createServer, type Server } from 'node:net'
import { Aedes, type Client } from 'aedes'
import { parseInputTopic } from '#shared/live/topics'

export interface BrokerOptions {
  host: string
  port: number
  /** Checks a device's username and password (the devices table). */
  checkDevice: (username: string, password: string) => Promise<boolean>
  /** The server's own bridge signs in with these. */
  internal: { username: string, password: string }
  /** Demo mode lets anonymous clients in (the fake layout can run without credentials). */
  allowAnonymous: boolean
  log: (message: string) => void
}

export interface RunningBroker { port: number, close: () => Promise<void> }

type Kind = 'server' | 'device' | 'anonymous'
const kinds = new WeakMap<Client, Kind>()

/** Devices may report detectors, turnouts and their status; only Blockbell itself sets signals and throws turnouts. */
export function devicePublishAllowed(topic: string): boolean {
  return parseInputTopic(topic) !== null
}

/** Starts the embedded MQTT broker (aedes) on the loopback interface, with device sign-in. */
export async function startBroker(options: BrokerOptions): Promise<RunningBroker> {
  const broker = await Aedes.createBroker({
    authenticate: (client, username, password, done) => {
      const secret = password?.toString() ?? ''
      if (!username) {
        if (options.allowAnonymous) { kinds.set(client, 'anonymous'); return done(null, true) }
        options.log(`MQTT client ${client.id} refused: no username (anonymous clients are allowed only in demo mode)`)
        return done(Object.assign(new Error('not authorized'), { returnCode: 4 }) as never, false)
      }
      if (username === options.internal.username) {
        const ok = secret === options.internal.password
        if (ok) kinds.set(client, 'server')
        return done(ok ? null : Object.assign(new Error('bad credentials'), { returnCode: 4 }) as never, ok)
      }
      options.checkDevice(username, secret).then((ok) => {
        if (ok) kinds.set(client, 'device')
        else options.log(`MQTT client ${client.id} refused: wrong username or password for "${username}"`)
        done(ok ? null : Object.assign(new Error('bad credentials'), { returnCode: 4 }) as never, ok)
      }, () => done(Object.assign(new Error('server unavailable'), { returnCode: 3 }) as never, false))
    },
    authorizePublish: (client, packet, done) => {
      if (!client || kinds.get(client) === 'server') return done(null)
      if (devicePublishAllowed(packet.topic)) return done(null)
      options.log(`MQTT publish by ${client.id} to ${packet.topic} refused: devices may publish detector, turnout and device status topics only`)
      done(new Error('publish not allowed'))
    },
  })
  const server: Server = createServer(broker.handle)
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject)
    server.listen(options.port, options.host, () => resolve())
  })
  const address = server.address()
  const port = typeof address === 'object' && address ? address.port : options.port
  options.log(`MQTT broker listening on ${options.host}:${port}${options.allowAnonymous ? ' (demo mode: anonymous clients allowed)' : ''}`)
  return {
    port,
    close: () => new Promise<void>((resolve) => {
      broker.close(() => server.close(() => resolve()))
    }),
  }
}
