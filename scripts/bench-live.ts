// npm run bench:live — publish -> panel latency with 200 panels and 200 detector events/s for 30 s,
// beside 200 bare MQTT subscribers on the same broker receiving the same publishes (the floor).
// Starts its own PostgreSQL and a Blockbell server from the build (.output; built first when missing).
import { execFileSync } from 'node:child_process'
import { existsSync } from 'node:fs'
import mqtt, { type MqttClient } from 'mqtt'
import WebSocket from 'ws'
import { startThrowawayPostgres } from '../tests/support/postgres'
import { seedDemoData } from '../server/database/seed'
import { freePort, startServer } from '../tests/support/processes'
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

if (!existsSync('.output/server/index.mjs')) execFileSync('./node_modules/.bin/nuxt', ['build'], { stdio: 'inherit' })
const pg = await startThrowawayPostgres({ database: 'blockbell_bench' })
const db = await pg.openMigrated()
await seedDemoData(db)
await db.sequelize.close()
const mqttPort = await freePort()
const server = await startServer({
  BLOCKBELL_DB_HOST: pg.settings.host, BLOCKBELL_DB_PORT: String(pg.settings.port), BLOCKBELL_DB_NAME: pg.settings.database,
  BLOCKBELL_DB_USER: pg.settings.username, BLOCKBELL_DB_PASSWORD: pg.settings.password,
  MQTT_PORT: String(mqttPort), BLOCKBELL_DETECTOR_DEBOUNCE_MS: '0', NUXT_SESSION_PASSWORD: 'bench-session-password-at-least-32-chars',
})
const url = `mqtt://127.0.0.1:${mqttPort}`
const device = { username: 'fake-layout', password: 'fake-layout-demo' }

try {
  const http = new SessionClient(server.url)
  await http.signIn(DEMO.viewer.email, DEMO.viewer.password)
  const panelLatency: number[] = []
  const mqttLatency: number[] = []
  let panelMessages = 0

  const sockets: WebSocket[] = []
  for (let i = 0; i < PANELS; i++) {
    const ws = new WebSocket(server.url.replace('http', 'ws') + '/live', { headers: { cookie: http.cookieHeader, origin: server.url } })
    await new Promise<void>((resolve, reject) => { ws.once('open', () => resolve()); ws.once('error', reject) })
    ws.on('message', (data) => {
      const m = JSON.parse(String(data))
      if (m.type !== 'delta') return
      const now = Date.now()
      for (const c of m.changes) if (c.type === 'detector') { panelLatency.push(now - c.at); panelMessages++ }
    })
    ws.send(JSON.stringify({ type: 'subscribe', layout: 'wrenfold' }))
    sockets.push(ws)
  }
  const subscribers: MqttClient[] = []
  for (let i = 0; i < SUBSCRIBERS; i++) {
    const client = await mqtt.connectAsync(url, device)
    client.on('message', (_t, payload) => { mqttLatency.push(Date.now() - JSON.parse(String(payload)).at) })
    await client.subscribeAsync(`${PREFIX}detector/+`)
    subscribers.push(client)
  }
  const publisher = await mqtt.connectAsync(url, device)
  console.log(`connected ${PANELS} panels and ${SUBSCRIBERS} MQTT subscribers; publishing ${RATE} detector events/s for ${SECONDS} s`)
  await new Promise(resolve => setTimeout(resolve, 1000))

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
        publisher.publish(`${PREFIX}detector/${detector}`, JSON.stringify({ occupied: next, at: Date.now() }))
        sent++
      }
      if (sent >= RATE * SECONDS) { clearInterval(timer); resolve() }
    }, 5)
  })
  await new Promise(resolve => setTimeout(resolve, 3000))

  const p = panelLatency.sort((a, b) => a - b)
  const m = mqttLatency.sort((a, b) => a - b)
  console.log(`\nsent ${sent} events; received ${panelMessages} of ${sent * PANELS} at the panels, ${m.length} of ${sent * SUBSCRIBERS} at the MQTT subscribers`)
  console.log('                     p50      p95      p99      max   (ms, publish -> received)')
  console.log(`panels (WebSocket)${fmt(percentile(p, 50))} ${fmt(percentile(p, 95))} ${fmt(percentile(p, 99))} ${fmt(p.at(-1) ?? NaN)}`)
  console.log(`bare MQTT subscriber${fmt(percentile(m, 50)).slice(2)} ${fmt(percentile(m, 95))} ${fmt(percentile(m, 99))} ${fmt(m.at(-1) ?? NaN)}`)
  console.log(`p99 ratio panels / bare MQTT: ${(percentile(p, 99) / Math.max(1, percentile(m, 99))).toFixed(2)} (target <= 2); lost at panels: ${sent * PANELS - panelMessages}`)
  for (const s of sockets) s.close()
  for (const c of [...subscribers, publisher]) await c.endAsync()
} finally {
  await server.stop()
  await pg.destroy()
}
