import { createServer, type Server, type Socket } from 'node:net'
import { Aedes, type Client } from 'aedes'
import { deviceRetainAllowed, devicePublishAllowed, deviceSubscribeAllowed, type BrokerIdentity } from './device-access'
import { DeviceSignInGuard } from './device-sign-in'
import { mqttPacketSizeGuard } from './mqtt-packet-limit'
import { RetainedOrder } from './retained-order'

export interface BrokerOptions {
  host: string
  port: number
  /**
   * Checks a device's username and password (the devices table). Resolves the device's layout slug (null:
   * every layout) when they are right, false when not. Must take as long for an unknown name as a known one.
   */
  checkDevice: (username: string, password: string) => Promise<{ layout: string | null } | false>
  /** The server's own bridge signs in with these. */
  internal: { username: string, password: string }
  /** Demo mode lets anonymous clients in (the fake layout can run without credentials). */
  allowAnonymous: boolean
  log: (message: string) => void
}

export interface RunningBroker {
  port: number
  /** Closes every connection signed in as this device (disabled, or its password changed). */
  disconnectDevice: (username: string) => number
  close: () => Promise<void>
}

/**
 * Largest packet accepted, after its fixed header: payloads are at most 1 KiB (docs/mqtt-topics.md), so this
 * leaves room for long topics and subscription lists while no connection can make the server buffer more.
 */
export const MAX_PACKET_BYTES = 16 * 1024
/** Subscriptions one device connection may hold. */
export const MAX_SUBSCRIPTIONS = 200
/** Retained payloads are contract payloads: turnout positions and device status. */
const MAX_RETAINED_BYTES = 1024

const identities = new WeakMap<Client, BrokerIdentity>()
const subscriptions = new WeakMap<Client, Set<string>>()
const retainedOrders = new WeakMap<Client, RetainedOrder>()
const retainedOrderOf = (client: Client) => {
  let order = retainedOrders.get(client)
  if (!order) retainedOrders.set(client, order = new RetainedOrder())
  return order
}

// aedes keeps its connected clients by client id; its type declarations leave the map out.
const clientsOf = (broker: Aedes) => (broker as unknown as { clients: Record<string, Client> }).clients

const refusal = (message: string, returnCode: number) => Object.assign(new Error(message), { returnCode }) as never

/** Starts the embedded MQTT broker (aedes) on the loopback interface, with device sign-in and permissions. */
export async function startBroker(options: BrokerOptions): Promise<RunningBroker> {
  const signIn = new DeviceSignInGuard()
  const broker: Aedes = await Aedes.createBroker({
    // Inbound QoS 2 messages one client may leave waiting for PUBREL (aedes keeps each in memory).
    maxInflightInbound: 16,
    connectTimeout: 10_000,
    // Every device gets a clean session: nothing piles up in memory for a device that is away, and a request
    // to throw a turnout is never carried out minutes late; signals come back from the retained messages.
    preConnect: (_client, packet, done) => {
      if (packet.username !== options.internal.username) packet.clean = true
      done(null, true)
    },
    authenticate: (client, username, password, done) => {
      const accept = (identity: BrokerIdentity) => {
        // A connection with a client id in use replaces the old one (MQTT 3.1.1 §3.1.4): only for the same account.
        const holder = clientsOf(broker)[client.id]
        if (holder && holder !== client && identities.get(holder)?.username !== identity.username) {
          options.log(`MQTT client ${client.id} refused: that client id is in use by another account`)
          return done(refusal('client id in use', 2), false)
        }
        identities.set(client, identity)
        done(null, true)
      }
      const secret = password?.toString() ?? ''
      if (!username) {
        if (options.allowAnonymous) return accept({ kind: 'anonymous', username: null, layout: null })
        options.log(`MQTT client ${client.id} refused: no username (anonymous clients are allowed only in demo mode)`)
        return done(refusal('not authorized', 4), false)
      }
      if (username === options.internal.username) {
        if (secret === options.internal.password) return accept({ kind: 'server', username, layout: null })
        return done(refusal('bad credentials', 4), false)
      }
      let layout: string | null = null
      const address = (client.conn as Socket).remoteAddress ?? 'unknown'
      signIn.attempt(username, address, async () => {
        const found = await options.checkDevice(username, secret)
        if (found) layout = found.layout
        return Boolean(found)
      }).then((result) => {
        if (result === 'ok') return accept({ kind: 'device', username, layout })
        if (result === 'wrong') {
          options.log(`MQTT client ${client.id} refused: wrong username or password for "${username}"`)
          return done(refusal('bad credentials', 4), false)
        }
        if (result === 'unavailable') return done(refusal('server unavailable', 3), false)
        options.log(`MQTT client ${client.id} from ${address} refused: too many sign-in attempts for "${username}" (${result})`)
        done(refusal('too many attempts; try again later', 3), false)
      }, () => done(refusal('server unavailable', 3), false))
    },
    authorizePublish: (client, packet, done) => {
      const identity = client ? identities.get(client) : undefined
      if (!client || identity?.kind === 'server') return done(null)
      if (!identity || !devicePublishAllowed(packet.topic, identity)) {
        options.log(`MQTT publish by ${client.id} to ${packet.topic} refused: a device may publish its layout's detector and turnout topics and its own device/<id>/status`)
        return done(new Error('publish not allowed'))
      }
      if (packet.retain && (!deviceRetainAllowed(packet.topic) || packet.payload.length > MAX_RETAINED_BYTES)) {
        options.log(`MQTT publish by ${client.id} to ${packet.topic}: not kept as retained (only turnout positions and device status are, up to ${MAX_RETAINED_BYTES} bytes)`)
        packet.retain = false
      }
      done(null)
    },
    authorizeSubscribe: (client, sub, done) => {
      const identity = client ? identities.get(client) : undefined
      if (!client) return done(null, sub)
      if (identity?.kind === 'server') {
        retainedOrderOf(client).subscribed(sub.topic)
        return done(null, sub)
      }
      const held = subscriptions.get(client) ?? new Set<string>()
      subscriptions.set(client, held)
      if (!identity || !deviceSubscribeAllowed(sub.topic, identity) || (!held.has(sub.topic) && held.size >= MAX_SUBSCRIPTIONS)) {
        options.log(`MQTT subscription by ${client.id} to ${sub.topic} refused: a device may subscribe to its layout's signal/<id>, turnout/<id>/set and area/<id> topics`)
        return done(null, null) // refused in the SUBACK (return code 0x80)
      }
      held.add(sub.topic)
      retainedOrderOf(client).subscribed(sub.topic)
      done(null, sub)
    },
    // Called, in order, for every message about to go to a connection (devices and the server's own clients
    // alike). aedes sends a new subscription's stored retained messages without a broker id and live ones with
    // it: a stored copy must not arrive after a newer live message on its topic (server/live/retained-order.ts).
    authorizeForward: (client, packet) => {
      const stored = packet.retain && !packet.brokerId
      return retainedOrderOf(client).forward(packet.topic, stored) ? packet : null
    },
  })
  const server: Server = createServer((socket) => {
    // aedes reads the socket with read(); every chunk passes the size guard before the MQTT parser sees it.
    const withinLimit = mqttPacketSizeGuard(MAX_PACKET_BYTES)
    const read = socket.read.bind(socket)
    socket.read = (size?: number) => {
      const chunk = read(size) as Buffer | null
      if (chunk && !withinLimit(chunk)) {
        options.log(`MQTT connection from ${socket.remoteAddress} closed: a packet over ${MAX_PACKET_BYTES} bytes`)
        socket.destroy()
        return null
      }
      return chunk
    }
    broker.handle(socket)
  })
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject)
    server.listen(options.port, options.host, () => resolve())
  })
  const address = server.address()
  const port = typeof address === 'object' && address ? address.port : options.port
  options.log(`MQTT broker listening on ${options.host}:${port}${options.allowAnonymous ? ' (demo mode: anonymous clients allowed)' : ''}`)
  return {
    port,
    disconnectDevice: (username) => {
      let closed = 0
      for (const client of Object.values(clientsOf(broker))) {
        const identity = identities.get(client)
        if (identity?.kind === 'device' && identity.username === username) { client.close(); closed++ }
      }
      if (closed) options.log(`MQTT: device "${username}" disconnected (${closed} connection(s))`)
      return closed
    },
    close: () => new Promise<void>((resolve) => {
      broker.close(() => server.close(() => resolve()))
    }),
  }
}
