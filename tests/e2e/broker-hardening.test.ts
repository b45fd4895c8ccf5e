import { spawn } from 'node:child_process'
import { connect as tcpConnect } from 'node:net'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import mqtt, { type IClientOptions, type MqttClient } from 'mqtt'
import { QueryTypes } from 'sequelize'
import { openDatabase, type Database } from '../../server/database/connection'
import { databaseSettings } from '../../server/database/config'
import { DEMO, SessionClient, unique } from '../support/http-client'
import { LiveClient } from '../support/live-client'
import { freePort, mosquittoPub, startServer, type Running } from '../support/processes'

// The embedded broker of a Blockbell server of its own (so its sign-in throttle cannot affect other tests),
// attacked from outside clients: Debian's mosquitto_pub / mosquitto_sub, mqtt.js and a bare TCP socket.
const PREFIX = 'blockbell/v1/wrenfold/'
const FAKE = { username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo' }

let server: Running & { url: string }
let mqttPort: number
let admin: SessionClient
let panel: LiveClient
let db: Database
const clients: MqttClient[] = []

const device = async (options: IClientOptions) => {
  const client = await mqtt.connectAsync(`mqtt://127.0.0.1:${mqttPort}`, { reconnectPeriod: 0, connectTimeout: 5000, ...options })
  clients.push(client)
  return client
}
const closed = (client: MqttClient, ms = 3000) => new Promise<boolean>((resolve) => {
  if (!client.connected) return resolve(true)
  const timer = setTimeout(() => resolve(false), ms)
  client.once('close', () => { clearTimeout(timer); resolve(true) })
})
async function newDevice(): Promise<{ id: number, username: string, password: string }> {
  const username = `board-${unique()}`
  const reply = await admin.post('/api/devices', { username, name: 'Quillbury signal box decoder', password: 'board-password-1' })
  expect(reply.status).toBe(201)
  return { id: reply.body.device.id, username, password: 'board-password-1' }
}
async function waitForOutput(pattern: RegExp): Promise<void> {
  for (let i = 0; i < 40 && !pattern.test(server.output()); i++) await new Promise(resolve => setTimeout(resolve, 50))
  expect(server.output()).toMatch(pattern)
}
/** mosquitto_sub's output and exit code: it waits `seconds` for one message. */
function mosquittoSub(topic: string, seconds: number, extra: string[] = []): Promise<{ code: number | null, out: string }> {
  return new Promise((resolve) => {
    const child = spawn('mosquitto_sub', ['-h', '127.0.0.1', '-p', String(mqttPort), '-u', FAKE.username, '-P', FAKE.password, '-t', topic, '-C', '1', '-W', String(seconds), '-v', ...extra])
    let out = ''
    child.stdout.on('data', (d) => { out += d })
    child.stderr.on('data', (d) => { out += d })
    child.once('exit', code => resolve({ code, out }))
  })
}

beforeAll(async () => {
  mqttPort = await freePort()
  server = await startServer({ BLOCKBELL_DB_NAME: 'blockbell_e2e', MQTT_PORT: String(mqttPort) })
  admin = new SessionClient(server.url)
  expect((await admin.signIn(DEMO.admin.email, DEMO.admin.password)).status).toBe(200)
  panel = await LiveClient.open(admin.cookieHeader, server.url)
  await panel.subscribe('wrenfold')
  db = openDatabase({ ...databaseSettings(), database: 'blockbell_e2e' })
})
afterAll(async () => {
  for (const c of clients) c.end(true)
  panel?.close()
  await db?.sequelize.close()
  await server?.stop()
})

describe('device times and the journal', () => {
  it('takes a detector report whose time is beyond any date at the receive time, and the journal keeps writing', async () => {
    const start = new Date(Date.now() - 1000)
    const occupied = panel.change(c => c.type === 'block' && c.block === 'FY1' && c.occupied)
    await mosquittoPub(mqttPort, `${PREFIX}detector/D13`, '{"occupied":true,"at":8700000000000000}', ['-u', FAKE.username, '-P', FAKE.password])
    await occupied
    const clear = panel.change(c => c.type === 'block' && c.block === 'FY1' && !c.occupied)
    await mosquittoPub(mqttPort, `${PREFIX}detector/D13`, '{"occupied":false,"at":1}', ['-u', FAKE.username, '-P', FAKE.password])
    await clear
    await new Promise(resolve => setTimeout(resolve, 600)) // the journal writes every 100 ms
    const rows = await db.sequelize.query<{ at: Date }>(
      `SELECT at FROM events WHERE type = 'detector-input' AND payload->>'detector' = 'D13' AND at >= :start ORDER BY id`,
      { replacements: { start }, type: QueryTypes.SELECT })
    expect(rows).toHaveLength(2)
    for (const row of rows) expect(Math.abs(row.at.getTime() - Date.now())).toBeLessThan(60_000)
    const health = await fetch(`${server.url}/api/health`).then(r => r.json())
    expect(health).toMatchObject({ status: 'ok', journal: { status: 'ok', setAside: 0 } })
    expect(server.output()).toMatch(/detector\/D13: "at" 8700000000000000 is more than 60 s after the server's time; the receive time is used/)
  })
})

describe('broker memory', () => {
  it('closes a connection whose CONNECT announces 200 MB, before any sign-in', async () => {
    const socket = tcpConnect(mqttPort, '127.0.0.1')
    await new Promise(resolve => socket.once('connect', resolve))
    // The fixed header of a CONNECT announcing 201,326,592 bytes, then up to 4 MB of body.
    let sent = 0
    const ended = new Promise<number>((resolve) => {
      socket.on('close', () => resolve(sent))
      socket.on('error', () => {})
    })
    const chunk = Buffer.alloc(64 * 1024)
    const pump = () => {
      while (!socket.destroyed && sent < 4 * 1024 * 1024 && socket.write(chunk)) sent += chunk.length
      if (!socket.destroyed && sent < 4 * 1024 * 1024) socket.once('drain', pump)
    }
    socket.write(Buffer.from([0x10, 0x80, 0x80, 0x80, 0x60]))
    pump()
    const result = await Promise.race([ended, new Promise<string>(resolve => setTimeout(() => resolve('still open'), 5000))])
    expect(result).not.toBe('still open')
    await waitForOutput(/closed: a packet over 16384 bytes/)
  })

  it('closes a signed-in device\'s connection when it publishes 1 MB', async () => {
    const client = await device(FAKE)
    client.publish(`${PREFIX}detector/D13`, Buffer.alloc(1024 * 1024, 0x31))
    expect(await closed(client)).toBe(true)
  })

  it('keeps no session for a device that asks for one (nothing is queued while it is away), and caps its subscriptions at 200', async () => {
    const clientId = `kept-${unique()}`.slice(0, 23)
    const first = await device({ ...FAKE, clean: false, clientId })
    await first.subscribeAsync(`${PREFIX}signal/+`, { qos: 1 })
    await first.endAsync()
    const again = mqtt.connect(`mqtt://127.0.0.1:${mqttPort}`, { ...FAKE, clean: false, clientId, reconnectPeriod: 0, resubscribe: false })
    clients.push(again)
    const connack = await new Promise<{ sessionPresent: boolean }>(resolve => again.once('connect', resolve))
    expect(connack.sessionPresent).toBe(false)
    const fresh = await device(FAKE)
    const many = await fresh.subscribeAsync(Array.from({ length: 200 }, (_, i) => `${PREFIX}signal/S${i}`), { qos: 1 })
    expect(many.filter(g => g.qos === 1)).toHaveLength(200)
    // mqtt.js rejects a SUBACK holding the failure code 0x80.
    await expect(fresh.subscribeAsync(`${PREFIX}signal/S200`, { qos: 1 })).rejects.toThrow(/Subscribe error/)
    expect(fresh.connected).toBe(true)
  })

  it('does not keep a retained message on a detector topic', async () => {
    await mosquittoPub(mqttPort, `${PREFIX}detector/D14`, '0', ['-u', FAKE.username, '-P', FAKE.password, '-r'])
    await waitForOutput(new RegExp(`to ${PREFIX}detector/D14: not kept as retained`))
  })
})

describe('device permissions', () => {
  it('refuses a device\'s subscriptions to # and $SYS/#, and grants its layout\'s signals', async () => {
    const everything = await mosquittoSub('#', 2)
    expect(everything.out).toMatch(/All subscription requests were denied/)
    const sys = await mosquittoSub('$SYS/#', 2)
    expect(sys.out).toMatch(/All subscription requests were denied/)
    const signal = await mosquittoSub(`${PREFIX}signal/SU1`, 3)
    expect(signal.out).toMatch(new RegExp(`^${PREFIX}signal/SU1 \\{"aspect":`))
  })

  it('refuses a device publishing another device\'s status (its connection is closed), and takes its own', async () => {
    const other = await newDevice()
    const fake = await device(FAKE)
    const forged = panel.change(c => c.type === 'device' && c.device === other.username, 1500).then(() => 'changed', () => 'unchanged')
    fake.publish(`${PREFIX}device/${other.username}/status`, 'online', { qos: 1 })
    expect(await closed(fake)).toBe(true)
    expect(await forged).toBe('unchanged')
    const board = await device({ username: other.username, password: other.password })
    const own = panel.change(c => c.type === 'device' && c.device === other.username)
    await board.publishAsync(`${PREFIX}device/${other.username}/status`, 'online', { qos: 1 })
    await own
  })

  it('refuses a second connection from another account with a client id in use; the same account may take it over', async () => {
    const clientId = `wrenfold-${unique()}`.slice(0, 23)
    const holder = await device({ ...FAKE, clientId })
    const other = await newDevice()
    await expect(device({ username: other.username, password: other.password, clientId })).rejects.toThrow(/Identifier rejected/i)
    expect(holder.connected).toBe(true)
    await device({ ...FAKE, clientId })
    expect(await closed(holder)).toBe(true)
  })
})

describe('device sign-in', () => {
  it('disconnects a device at once when an admin disables it', async () => {
    const board = await newDevice()
    const client = await device({ username: board.username, password: board.password })
    expect((await admin.patch(`/api/devices/${board.id}`, { disabled: true })).status).toBe(200)
    expect(await closed(client, 2000)).toBe(true)
    await expect(device({ username: board.username, password: board.password })).rejects.toThrow()
  })

  it('refuses most of 100 parallel wrong passwords without checking them, then the right one from that address for a while', async () => {
    const board = await newDevice()
    const wrong = () => device({ username: board.username, password: 'wrong-password-1' }).then(() => 'in', (e: Error) => e.message)
    const results = await Promise.all(Array.from({ length: 100 }, wrong))
    expect(results).not.toContain('in')
    expect(results.filter(m => /Server unavailable/i.test(m)).length).toBeGreaterThanOrEqual(90)
    for (let i = 0; i < 10; i++) await wrong()
    await expect(device({ username: board.username, password: board.password })).rejects.toThrow(/Server unavailable/i)
    await waitForOutput(new RegExp(`refused: too many sign-in attempts for "${board.username}"`))
  })
})
