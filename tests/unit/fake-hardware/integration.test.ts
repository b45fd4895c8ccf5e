// The fake layout process against a real MQTT broker (aedes, started here on a free port) and a real mqtt.js
// subscriber: what a Blockbell server or any other client on the broker would receive.
import { spawn, type ChildProcess } from 'node:child_process'
import { readFileSync } from 'node:fs'
import net from 'node:net'
import { fileURLToPath } from 'node:url'
import { Aedes } from 'aedes'
import mqtt, { type MqttClient } from 'mqtt'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { ROOT } from './harness'

const PREFIX = 'blockbell/v1/wrenfold/'
const CWD = fileURLToPath(ROOT)

interface Received {
  topic: string
  payload: string
  retain: boolean
}

let broker: Aedes
let server: net.Server
let url: string
let logins: string[]
/** What the fake layout published, as the broker got it (with the retain flag it was sent with). */
let published: Received[]
let child: ChildProcess | undefined
let watcher: MqttClient | undefined

beforeEach(async () => {
  broker = await Aedes.createBroker()
  logins = []
  // devices authenticate; the test's own subscriber has its own account
  broker.authenticate = (_client, username, password, done) => {
    const ok = (username === 'fake-layout' && password?.toString() === 'fake-layout-demo') || (username === 'watcher' && password?.toString() === 'watching')
    if (ok) logins.push(username!)
    done(null, ok)
  }
  published = []
  broker.on('publish', (packet, client) => {
    if (client?.id.startsWith('fake-layout-')) published.push({ topic: packet.topic.slice(PREFIX.length), payload: packet.payload.toString(), retain: packet.retain })
  })
  server = net.createServer(broker.handle)
  await new Promise<void>(resolve => server.listen(0, '127.0.0.1', resolve))
  url = `mqtt://127.0.0.1:${(server.address() as net.AddressInfo).port}`
})

afterEach(async () => {
  if (child && child.exitCode === null && child.signalCode === null) child.kill('SIGKILL')
  child = undefined
  await watcher?.endAsync(true)
  watcher = undefined
  await new Promise<void>(resolve => broker.close(() => resolve()))
  await new Promise<void>(resolve => server.close(() => resolve()))
})

/** A subscriber to everything under the layout's prefix (retain flags: see `published`). */
async function watch(): Promise<{ client: MqttClient, got: Omit<Received, 'retain'>[] }> {
  const client = await mqtt.connectAsync(url, { username: 'watcher', password: 'watching', clientId: 'watcher' })
  const got: Omit<Received, 'retain'>[] = []
  client.on('message', (topic, payload) => got.push({ topic: topic.slice(PREFIX.length), payload: payload.toString() }))
  await client.subscribeAsync(`${PREFIX}#`, { qos: 1 })
  watcher = client
  return { client, got }
}

function start(args: string[], env: Record<string, string> = {}): { done: Promise<number | null>, out: string[] } {
  const out: string[] = []
  child = spawn(process.execPath, ['--import', 'tsx', 'fake-hardware/index.ts', ...args], {
    cwd: CWD,
    env: { ...process.env, MQTT_URL: url, ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  child.stdout!.on('data', (d: Buffer) => out.push(...d.toString().split('\n').filter(Boolean)))
  child.stderr!.on('data', (d: Buffer) => out.push(...d.toString().split('\n').filter(Boolean)))
  const done = new Promise<number | null>(resolve => child!.on('exit', code => resolve(code)))
  return { done, out }
}

async function until(check: () => boolean, ms: number): Promise<void> {
  const end = Date.now() + ms
  while (!check()) {
    if (Date.now() > end) throw new Error('timed out')
    await new Promise(r => setTimeout(r, 20))
  }
}

describe('the fake layout process on a real broker', () => {
  it('plays a script in order, answers a turnout request, and goes offline at the end', async () => {
    const { client, got } = await watch()
    const script = JSON.parse(readFileSync(new URL('fake-hardware/scripts/one-train-up-main.json', ROOT), 'utf8')) as { topic: string, payload: string }[]
    const run = start(['--script', 'fake-hardware/scripts/one-train-up-main.json', '--speed-factor', '10'])
    // once the train is on the up main, an operator throws T4
    await until(() => got.some(m => m.topic === 'detector/D01' && m.payload === '1'), 20_000)
    await client.publishAsync(`${PREFIX}turnout/T4/set`, JSON.stringify({ position: 'reverse', by: 'Tam Oakridge' }), { qos: 1 })
    expect(await run.done).toBe(0)
    await until(() => got.at(-1)?.topic === 'device/fake-layout/status', 5000)

    expect(logins).toContain('fake-layout')
    const fromLayout = got.filter(m => m.topic !== 'turnout/T4/set')
    expect(fromLayout[0]).toEqual({ topic: 'device/fake-layout/status', payload: 'online' })
    expect(fromLayout.at(-1)).toEqual({ topic: 'device/fake-layout/status', payload: 'offline' })
    const answer = fromLayout.findIndex(m => m.topic === 'turnout/T4' && m.payload === 'reverse')
    expect(answer).toBeGreaterThan(0)
    const played = fromLayout.slice(1, -1).filter((_, i) => i + 1 !== answer)
    expect(played.map(m => [m.topic, m.payload])).toEqual(script.map(e => [e.topic, e.payload]))
    // as sent: status and turnouts retained, detector changes not
    expect(published).toEqual(fromLayout.map(m => ({ ...m, retain: !m.topic.startsWith('detector/') })))
    expect(run.out.some(l => /detector\/D01 1 {2}1F42 enters UM1$/.test(l))).toBe(true)
    expect(run.out.some(l => l.endsWith('T4 thrown reverse on request by Tam Oakridge'))).toBe(true)

    // what a device or server connecting later finds retained
    const late = await mqtt.connectAsync(url, { username: 'watcher', password: 'watching', clientId: 'late' })
    const retained = new Map<string, string>()
    late.on('message', (topic, payload) => retained.set(topic.slice(PREFIX.length), payload.toString()))
    await late.subscribeAsync(`${PREFIX}#`, { qos: 1 })
    await until(() => retained.has('turnout/T4') && retained.has('device/fake-layout/status'), 5000)
    expect(retained.get('turnout/T4')).toBe('reverse')
    expect(retained.get('device/fake-layout/status')).toBe('offline')
    await late.endAsync()
  }, 40_000)

  it('runs trains, reports every turnout and detector at start, and its last will says offline', async () => {
    const { got } = await watch()
    const run = start(['--seed', '5', '--speed-factor', '20', '--ignore-signals', '--dropout-chance', '0'])
    await until(() => got.filter(m => m.topic.startsWith('detector/')).length >= 16 + 12, 30_000)
    const layout = JSON.parse(readFileSync(new URL('shared/layouts/demo-layout.json', ROOT), 'utf8')) as { blocks: { detectors: string[] }[], turnouts: { id: string }[] }
    const detectors = layout.blocks.flatMap(b => b.detectors)
    expect(got[0]).toEqual({ topic: 'device/fake-layout/status', payload: 'online' })
    const first = got.slice(1, 1 + layout.turnouts.length + detectors.length)
    expect(first.slice(0, layout.turnouts.length).map(m => m.topic)).toEqual(layout.turnouts.map(t => `turnout/${t.id}`))
    expect(published.filter(m => m.topic.startsWith('turnout/')).every(m => m.retain)).toBe(true)
    expect(first.slice(layout.turnouts.length).map(m => m.topic)).toEqual(detectors.map(d => `detector/${d}`))
    // the four trains stand in the fiddle roads FY1-FY4 (D13-D16) at the start, each detector reporting the
    // decoder address of the train on it (fake-hardware/trains/wrenfold.json)
    expect(first.slice(layout.turnouts.length).filter(m => m.payload !== '0').map(m => [m.topic, JSON.parse(m.payload).address])).toEqual([
      ['detector/D13', 142], ['detector/D14', 650], ['detector/D15', 201], ['detector/D16', 233],
    ])
    // afterwards only the layout's own detectors and turnouts, with their payloads
    for (const m of got.slice(1)) {
      if (m.topic.startsWith('detector/')) expect(detectors).toContain(m.topic.slice(9))
      else expect(m.topic).toMatch(/^turnout\/T[1-7]$/)
      expect(m.payload).toMatch(/^(0|1|normal|reverse|\{"occupied":true,"address":\d+\})$/)
    }
    expect(run.out.some(l => / 1F42 enters UM1 \(D01=1\)$/.test(l))).toBe(true)

    // killed without saying goodbye: the broker publishes the last will
    child!.kill('SIGKILL')
    await until(() => got.at(-1)?.topic === 'device/fake-layout/status', 10_000)
    expect(got.at(-1)).toEqual({ topic: 'device/fake-layout/status', payload: 'offline' })
    const late = await mqtt.connectAsync(url, { username: 'watcher', password: 'watching', clientId: 'late' })
    const retained: Received[] = []
    late.on('message', (topic, payload, packet) => retained.push({ topic, payload: payload.toString(), retain: packet.retain }))
    await late.subscribeAsync(`${PREFIX}device/+/status`, { qos: 1 })
    await until(() => retained.length > 0, 5000)
    expect(retained).toEqual([{ topic: `${PREFIX}device/fake-layout/status`, payload: 'offline', retain: true }])
    await late.endAsync()
  }, 60_000)

  it('refuses to start with a layout that is not valid, saying why', async () => {
    const run = start(['--layout', 'fake-hardware/trains/wrenfold.json'])
    expect(await run.done).toBe(2)
    expect(run.out.join('\n')).toContain('is not valid')
  }, 20_000)
})
