import { afterEach, describe, expect, it } from 'vitest'
import mqtt, { type MqttClient } from 'mqtt'
import { startBroker, type RunningBroker } from '../../../server/live/broker'

// The embedded broker (server/live/broker.ts, aedes inside) with real mqtt.js clients: the server's own
// bridge, and a device that subscribes while the server is publishing. MQTT 3.1.1 §3.3.1.3 has the broker send
// a new subscriber the last retained message of each topic, and §4.6 keeps one publisher's messages on a topic
// in order: a device must never be left holding an older indication than the one Blockbell published last.
const PREFIX = 'blockbell/v1/wrenfold/'
const INTERNAL = { username: 'blockbell-server', password: 'internal-secret' }
const SIGNALS = Array.from({ length: 120 }, (_, i) => `S${i + 1}`)

let broker: RunningBroker | undefined
const clients: MqttClient[] = []

afterEach(async () => {
  await Promise.all(clients.splice(0).map(c => c.endAsync(true)))
  await broker?.close()
  broker = undefined
})

async function connect(options: mqtt.IClientOptions): Promise<MqttClient> {
  const client = await mqtt.connectAsync(`mqtt://127.0.0.1:${broker!.port}`, { reconnectPeriod: 0, ...options })
  clients.push(client)
  return client
}

describe('retained indications for a device that subscribes while they change', () => {
  it('leaves the device with the newest indication of every signal (a stored copy never overtakes a newer one)', async () => {
    broker = await startBroker({
      host: '127.0.0.1', port: 0, internal: INTERNAL, allowAnonymous: false, log: () => {},
      checkDevice: async (username, password) => username === 'fake-layout' && password === 'fake-layout-demo' ? { layout: null } : false,
    })
    const server = await connect({ ...INTERNAL, clientId: 'bridge' })
    await Promise.all(SIGNALS.map(s => server.publishAsync(`${PREFIX}signal/${s}`, JSON.stringify({ aspect: 'danger' }), { qos: 1, retain: true })))

    const device = await connect({ username: 'fake-layout', password: 'fake-layout-demo', clientId: 'fake-layout-1' })
    const last = new Map<string, string>()
    let received = 0
    device.on('message', (topic, payload) => {
      received++
      last.set(topic.slice(PREFIX.length + 'signal/'.length), (JSON.parse(payload.toString()) as { aspect: string }).aspect)
    })
    // As at start-up: the device subscribes and reports its turnouts, and the signals clear at once (here the
    // moment the broker has granted the subscription, while it is still sending the stored indications).
    await device.subscribeAsync(`${PREFIX}signal/+`, { qos: 1 })
    await Promise.all(SIGNALS.map(s => server.publishAsync(`${PREFIX}signal/${s}`, JSON.stringify({ aspect: 'proceed' }), { qos: 1, retain: true })))
    await expect.poll(() => received >= SIGNALS.length && SIGNALS.every(s => last.has(s)), { timeout: 5000 }).toBe(true)
    await new Promise(resolve => setTimeout(resolve, 300)) // anything still on its way
    const stale = SIGNALS.filter(s => last.get(s) !== 'proceed')
    expect(stale).toEqual([])

    // A device that subscribes later gets the stored indications, now the new ones.
    const later = await connect({ username: 'fake-layout', password: 'fake-layout-demo', clientId: 'fake-layout-2' })
    const got: string[] = []
    later.on('message', (_topic, payload) => got.push((JSON.parse(payload.toString()) as { aspect: string }).aspect))
    await later.subscribeAsync(`${PREFIX}signal/+`, { qos: 1 })
    await expect.poll(() => got.length, { timeout: 5000 }).toBe(SIGNALS.length)
    expect(new Set(got)).toEqual(new Set(['proceed']))
  })
})
