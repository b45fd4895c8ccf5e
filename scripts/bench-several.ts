// npm run bench:several — two Blockbell processes behind one Debian mosquitto (MQTT_URL, BLOCKBELL_INSTANCE):
// publish -> panel latency with the panels split across both processes (half see the owner's deltas directly,
// half relayed by the other process), beside bare MQTT subscribers on the same broker (the floor); then the
// takeover time after kill -9 of the owner. Starts its own PostgreSQL, mosquitto and two servers from .output.
import { execFileSync } from 'node:child_process'
import { existsSync } from 'node:fs'
import mqtt, { type MqttClient } from 'mqtt'
import WebSocket from 'ws'
import { startThrowawayPostgres } from '../tests/support/postgres'
import { seedDemoData } from '../server/database/seed'
import { freePort, startMosquitto, startServer } from '../tests/support/processes'
import { DEMO, SessionClient } from '../tests/support/http-client'

const PANELS = Number(process.env.BENCH_PANELS ?? 200)
const SUBSCRIBERS = Number(process.env.BENCH_SUBSCRIBERS ?? 200)
const RATE = Number(process.env.BENCH_RATE ?? 200)
const SECONDS = Number(process.env.BENCH_SECONDS ?? 30)
const PREFIX = 'blockbell/v1/wrenfold/'
const DETECTORS = ['D01', 'D02', 'D03', 'D04', 'D05', 'D06', 'D07', 'D08', 'D13', 'D14', 'D15', 'D16']

function percentile(sorted: number[], p: number) {
  return sorted.length ? sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))]! : NaN
}
const fmt = (n: number) => n.toFixed(2).padStart(8)
const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

if (!existsSync('.output/server/index.mjs')) execFileSync('./node_modules/.bin/nuxt', ['build'], { stdio: 'inherit' })
const pg = await startThrowawayPostgres({ database: 'blockbell_bench_several' })
const db = await pg.openMigrated()
await seedDemoData(db)
await db.sequelize.close()
const brokerPort = await freePort()
const broker = await startMosquitto(brokerPort)
const url = `mqtt://127.0.0.1:${brokerPort}`
const env = {
  BLOCKBELL_DB_HOST: pg.settings.host, BLOCKBELL_DB_PORT: String(pg.settings.port), BLOCKBELL_DB_NAME: pg.settings.database,
  BLOCKBELL_DB_USER: pg.settings.username, BLOCKBELL_DB_PASSWORD: pg.settings.password, MQTT_URL: url, MQTT_PORT: '0',
  BLOCKBELL_DETECTOR_DEBOUNCE_MS: '0', NUXT_SESSION_PASSWORD: 'bench-session-password-at-least-32-chars',
}
// The demo has one layout (wrenfold): the public count says whether this process runs it.
const owns = async (server: { url: string }) => ((await (await fetch(`${server.url}/api/health`)).json()) as { layoutsOwned: number }).layoutsOwned > 0
const first = await startServer({ ...env, BLOCKBELL_INSTANCE: 'bench-a' })
while (!await owns(first)) await sleep(100)
const second = await startServer({ ...env, BLOCKBELL_INSTANCE: 'bench-b' })
const servers = [first, second]

try {
  const panelLatency = [[], []] as number[][]
  const mqttLatency: number[] = []
  let panelMessages = 0
  const sockets: WebSocket[] = []
  const cookies: string[] = []
  for (const server of servers) {
    const http = new SessionClient(server.url)
    await http.signIn(DEMO.viewer.email, DEMO.viewer.password)
    cookies.push(http.cookieHeader)
  }
  for (let i = 0; i < PANELS; i++) {
    const side = i % 2
    const server = servers[side]!
    const ws = new WebSocket(server.url.replace('http', 'ws') + '/live', { headers: { cookie: cookies[side]!, origin: server.url } })
    await new Promise<void>((resolve, reject) => { ws.once('open', () => resolve()); ws.once('error', reject) })
    ws.on('message', (data) => {
      const m = JSON.parse(String(data))
      if (m.type !== 'delta') return
      const now = Date.now()
      for (const c of m.changes) if (c.type === 'detector') { panelLatency[side]!.push(now - c.at); panelMessages++ }
    })
    ws.send(JSON.stringify({ type: 'subscribe', layout: 'wrenfold' }))
    sockets.push(ws)
  }
  const subscribers: MqttClient[] = []
  for (let i = 0; i < SUBSCRIBERS; i++) {
    const client = await mqtt.connectAsync(url)
    client.on('message', (_t, payload) => { mqttLatency.push(Date.now() - JSON.parse(String(payload)).at) })
    await client.subscribeAsync(`${PREFIX}detector/+`)
    subscribers.push(client)
  }
  const publisher = await mqtt.connectAsync(url)
  console.log(`2 processes (bench-a runs the layout, bench-b relays); ${PANELS} panels split across them, ${SUBSCRIBERS} bare MQTT subscribers; ${RATE} detector events/s for ${SECONDS} s`)
  await sleep(1000)

  const occupied = new Map<string, boolean>()
  let sent = 0
  const started = Date.now()
  await new Promise<void>((resolve) => {
    const timer = setInterval(() => {
      const due = Math.floor(((Date.now() - started) / 1000) * RATE)
      while (sent < due && sent < RATE * SECONDS) {
        const detector = DETECTORS[sent % DETECTORS.length]!
        const next = !occupied.get(detector)
        occupied.set(detector, next)
        publisher.publish(`${PREFIX}detector/${detector}`, JSON.stringify({ occupied: next, at: Date.now() }), { qos: 1 })
        sent++
      }
      if (sent >= RATE * SECONDS) { clearInterval(timer); resolve() }
    }, 5)
  })
  await sleep(3000)

  const direct = panelLatency[0]!.sort((a, b) => a - b)
  const relayed = panelLatency[1]!.sort((a, b) => a - b)
  const all = [...direct, ...relayed].sort((a, b) => a - b)
  const m = mqttLatency.sort((a, b) => a - b)
  console.log(`\nsent ${sent} events; received ${panelMessages} of ${sent * PANELS} at the panels, ${m.length} of ${sent * SUBSCRIBERS} at the MQTT subscribers`)
  console.log('                          p50      p95      p99      max   (ms, publish -> received)')
  console.log(`panels on the owner    ${fmt(percentile(direct, 50))} ${fmt(percentile(direct, 95))} ${fmt(percentile(direct, 99))} ${fmt(direct.at(-1) ?? NaN)}`)
  console.log(`panels relayed         ${fmt(percentile(relayed, 50))} ${fmt(percentile(relayed, 95))} ${fmt(percentile(relayed, 99))} ${fmt(relayed.at(-1) ?? NaN)}`)
  console.log(`all panels             ${fmt(percentile(all, 50))} ${fmt(percentile(all, 95))} ${fmt(percentile(all, 99))} ${fmt(all.at(-1) ?? NaN)}`)
  console.log(`bare MQTT subscriber   ${fmt(percentile(m, 50))} ${fmt(percentile(m, 95))} ${fmt(percentile(m, 99))} ${fmt(m.at(-1) ?? NaN)}`)
  console.log(`p99 ratio all panels / bare MQTT: ${(percentile(all, 99) / Math.max(1, percentile(m, 99))).toFixed(2)} (target <= 2); relayed panels alone: ${(percentile(relayed, 99) / Math.max(1, percentile(m, 99))).toFixed(2)}; lost at panels: ${sent * PANELS - panelMessages}`)

  // Takeover: kill -9 the owner; time until the survivor says it runs the layout, and until its panels have
  // the new owner's snapshot (panels on the survivor are those of side 1 here; side 0 were on the killed one).
  const survivorSnapshots: number[] = []
  for (const [i, ws] of sockets.entries()) if (i % 2 === 1) ws.on('message', (data) => { if (JSON.parse(String(data)).type === 'snapshot') survivorSnapshots.push(Date.now()) })
  const killedAt = Date.now()
  first.process.kill('SIGKILL')
  while (!await owns(second).catch(() => false)) await sleep(20)
  const ownedMs = Date.now() - killedAt
  const until = Date.now() + 5000
  while (survivorSnapshots.length < PANELS / 2 && Date.now() < until) await sleep(20)
  console.log(`\ntakeover after kill -9 of the owner: the survivor runs the layout ${ownedMs} ms after the kill (target < 5000); ${survivorSnapshots.length} of ${PANELS / 2} panels on it had the new snapshot, the last ${survivorSnapshots.length ? Math.max(...survivorSnapshots) - killedAt : NaN} ms after the kill`)
  for (const s of sockets) s.close()
  for (const c of [...subscribers, publisher]) await c.endAsync()
} finally {
  for (const s of servers) await s.stop()
  await broker.stop()
  await pg.destroy()
}
