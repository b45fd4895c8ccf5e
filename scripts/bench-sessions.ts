// Benchmark of a session's review on the built server (prints figures; asserts nothing about time).
//   ./node_modules/.bin/tsx scripts/bench-sessions.ts     (also run at the end of `npm run bench:journal`)
// One four-hour session of 1,000,000 events on Wrenfold Junction, in a throwaway PostgreSQL cluster; the
// built server (.output, run `npx nuxt build` first) answers over HTTP as it would a panel or a browser.
import { spawn } from 'node:child_process'
import { mkdtempSync, readFileSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { QueryTypes } from 'sequelize'
import { initialState, validateLayout } from '#shared/signalling'
import demo from '#shared/layouts/demo-layout.json'
import { openDatabase, type Database } from '../server/database/connection'
import { createMigrator } from '../server/database/migrator'
import { seedDemoData } from '../server/database/seed'
import { freePort, startThrowawayPostgres } from '../tests/support/postgres'
import { SessionClient, DEMO } from '../tests/support/http-client'

const EVENTS = Number(process.env.BENCH_SESSION_EVENTS ?? 1_000_000)
const HOURS = 4
const quantile = (values: number[], q: number) => [...values].sort((a, b) => a - b)[Math.min(values.length - 1, Math.floor(q * values.length))] ?? NaN
const ms = (n: number) => `${n.toFixed(1)} ms`
const sleep = (n: number) => new Promise(done => setTimeout(done, n))

async function timed(label: string, times: number, run: (i: number) => Promise<unknown>) {
  const t: number[] = []
  for (let i = 0; i < times; i++) {
    const t0 = performance.now()
    await run(i)
    t.push(performance.now() - t0)
  }
  console.log(`   ${label}: p50 ${ms(quantile(t, 0.5))}, p95 ${ms(quantile(t, 0.95))} (${times} requests)`)
}

function rssOf(pid: number): number {
  return Number(/VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'))![1]) * 1024
}

/** One ended four-hour session of EVENTS synthetic events on the demo layout (seeded first). */
export async function fillBenchSession(db: Database) {
  const layout = validateLayout(demo)
  if (!layout.ok) throw new Error('demo layout invalid')
  const [{ id: layoutId }] = await db.sequelize.query<{ id: number }>(`SELECT id FROM layouts WHERE slug = 'wrenfold'`, { type: QueryTypes.SELECT }) as [{ id: number }]
  const end = Date.now()
  const start = end - HOURS * 3_600_000
  const session = await db.models.OperatingSession.create({ layoutId, layoutVersion: 1, name: 'Bench night', startedAt: new Date(start), endedAt: new Date(end), fastClockRatio: 4 })
  const state = initialState(layout.layout)
  for (const t of Object.keys(state.turnouts)) state.turnouts[t] = 'normal'
  await db.sequelize.query(`INSERT INTO session_checkpoints (session_id, event_id, at, events_folded, state) VALUES (:id, 0, :at, 0, :state)`,
    { replacements: { id: session.id, at: new Date(start), state: JSON.stringify({ engine: state, areas: { main: null, branch: null } }) } })
  const t0 = performance.now()
  // 1,000,000 events over four hours: 40 % detector inputs (the replay folds them), 25 % block changes,
  // 15 % indications, 10 % train descriptions stepping along the up main, 5 % commands, 4 % speeds, 1 % alarms.
  await db.sequelize.query(`
    INSERT INTO events (layout_id, session_id, at, type, subject, payload, user_id)
    SELECT :layoutId, :sessionId, to_timestamp(:start / 1000.0) + g * (:span * interval '1 millisecond'),
      k.type, k.subject, k.payload, k.user_id
    FROM generate_series(1, :events) AS g,
    LATERAL (SELECT CASE WHEN g % 100 < 40 THEN 'detector-input' WHEN g % 100 < 65 THEN 'block' WHEN g % 100 < 80 THEN 'indication'
        WHEN g % 100 < 90 THEN 'description' WHEN g % 100 < 95 THEN 'command' WHEN g % 100 < 99 THEN 'speed' ELSE 'alarm' END AS type,
      'UM' || (g / 100 % 4 + 1) AS block, 'D0' || (g / 100 % 4 + 1) AS detector, '1F' || lpad((g / 400 % 20 + 1)::text, 2, '0') AS train) AS v,
    LATERAL (SELECT v.type,
      CASE v.type WHEN 'detector-input' THEN v.detector WHEN 'indication' THEN 'SU1' WHEN 'command' THEN 'SU1' WHEN 'alarm' THEN 'SU3' ELSE v.block END AS subject,
      CASE v.type
        WHEN 'detector-input' THEN jsonb_build_object('type', 'detector', 'detector', v.detector, 'occupied', g % 2 = 0)
        WHEN 'block' THEN jsonb_build_object('type', 'block', 'block', v.block, 'occupied', g % 2 = 0)
        WHEN 'indication' THEN jsonb_build_object('type', 'indication', 'signal', 'SU1', 'indication', jsonb_build_object('aspect', 'caution', 'indicator', null))
        WHEN 'description' THEN jsonb_build_object('type', 'description', 'block', v.block, 'description', v.train, 'reason', 'step', 'from', 'UM1')
        WHEN 'command' THEN jsonb_build_object('action', 'set-override', 'signal', 'SU1', 'mode', CASE WHEN g % 2 = 0 THEN 'hold' ELSE 'auto' END, 'revision', 0)
        WHEN 'speed' THEN jsonb_build_object('type', 'speed', 'block', v.block, 'description', v.train, 'lengthMm', 1500, 'seconds', 6, 'kmh', 68.6, 'mph', 42.6)
        ELSE jsonb_build_object('type', 'alarm', 'alarm', jsonb_build_object('id', 'A' || g, 'kind', 'spad', 'signal', 'SU3', 'block', 'UM4', 'description', v.train, 'at', (:start + g * :span)::bigint, 'acknowledgedAt', null))
      END AS payload,
      CASE WHEN v.type = 'command' THEN 2 ELSE NULL END AS user_id) AS k`,
  { replacements: { layoutId, sessionId: session.id, start, span: (end - start) / EVENTS, events: EVENTS } })
  await db.sequelize.query('ANALYZE events')
  console.log(`\n4. A session's review: ${EVENTS.toLocaleString('en')} events over ${HOURS} hours inserted in ${((performance.now() - t0) / 1000).toFixed(1)} s`)
  return { session, start, end }
}

export async function benchSessions(): Promise<void> {
  const cluster = await startThrowawayPostgres({ fast: true })
  const db = openDatabase(cluster.settings)
  const dataDir = mkdtempSync(join(tmpdir(), 'blockbell-bench-sessions-'))
  let server: ReturnType<typeof spawn> | null = null
  try {
    await createMigrator(db.sequelize).up()
    await seedDemoData(db)
    const { session, start, end } = await fillBenchSession(db)

    const port = await freePort()
    const mqttPort = await freePort()
    const s = cluster.settings
    server = spawn(process.execPath, ['.output/server/index.mjs'], {
      env: {
        ...process.env, PORT: String(port), HOST: '127.0.0.1', MQTT_PORT: String(mqttPort), BLOCKBELL_DATA_DIR: dataDir,
        NUXT_SESSION_PASSWORD: 'bench-sessions-secret-0123456789abcdefghij',
        BLOCKBELL_DB_HOST: s.host, BLOCKBELL_DB_PORT: String(s.port), BLOCKBELL_DB_NAME: s.database, BLOCKBELL_DB_USER: s.username, BLOCKBELL_DB_PASSWORD: s.password,
      },
      stdio: ['ignore', 'ignore', 'inherit'],
    })
    const base = `http://127.0.0.1:${port}`
    for (let i = 0; ; i++) {
      if (await fetch(`${base}/api/health`).then(r => r.ok, () => false)) break
      if (i > 120) throw new Error('the server did not start')
      await sleep(250)
    }
    const client = new SessionClient(base)
    await client.signIn(DEMO.viewer.email, DEMO.viewer.password)
    const api = `/api/sessions/${session.id}`
    const get = async (path: string) => {
      const r = await client.get(path)
      if (r.status !== 200) throw new Error(`${path}: ${r.status} ${JSON.stringify(r.body).slice(0, 200)}`)
      return r.body
    }
    await get(`${api}/events?limit=1`)
    await timed('first page, kind=alarm (1 %), 100 rows', 30, () => get(`${api}/events?kind=alarm&limit=100`))
    await timed('first page, block=UM2 (about 20 %), 100 rows', 30, () => get(`${api}/events?block=UM2&limit=100`))
    await timed('first page, train 1F07, newest first, 100 rows', 30, () => get(`${api}/events?description=1F07&order=desc&limit=100`))
    const [{ deep }] = await db.sequelize.query<{ deep: string }>(`SELECT id::text AS deep FROM events WHERE session_id = :id ORDER BY id OFFSET :n LIMIT 1`,
      { replacements: { id: session.id, n: Math.floor(EVENTS * 0.9) }, type: QueryTypes.SELECT }) as [{ deep: string }]
    const cursor = Buffer.from(`asc:${deep}`).toString('base64url')
    await timed('deep keyset page (after row 900,000), 100 rows', 30, () => get(`${api}/events?limit=100&after=${cursor}`))
    await timed('deep keyset page (after row 900,000), kind=alarm', 30, () => get(`${api}/events?limit=100&kind=alarm&after=${cursor}`))

    const tc = performance.now()
    await get(`${api}/replay?at=${start + 1000}`)
    const [{ n }] = await db.sequelize.query<{ n: string }>(`SELECT count(*) AS n FROM session_checkpoints WHERE session_id = :id`, { replacements: { id: session.id }, type: QueryTypes.SELECT }) as [{ n: string }]
    console.log(`   replay checkpoints built once for the whole session: ${n} in ${ms(performance.now() - tc)}`)
    await timed('replay seek to the middle', 20, i => get(`${api}/replay?at=${Math.round((start + end) / 2) + i * 7_919}`))
    await timed('replay seek to the end', 20, i => get(`${api}/replay?at=${end - i * 7_919}`))
    let drawn: { thinning?: { points: number, shown: number } | null, trains: { points: unknown[] }[] } | null = null
    const tg = performance.now()
    await get(`${api}/graph?route=UM1,UM2,UM3,UM4&width=1200`)
    console.log(`   time-distance data, first request (stores the session's train moves): ${ms(performance.now() - tg)}`)
    // a route nobody has looked at yet: the session's stored moves read from PostgreSQL and folded for the route
    const routes = ['UM2,UM3,UM4', 'UM1,UM2,UM3', 'UM1,UM3,UM4', 'UM1,UM2,UM4', 'UM4,UM3,UM2,UM1', 'UM3,UM2,UM1', 'UM4,UM3,UM2', 'UM2,UM3', 'UM3,UM4', 'UM1,UM2']
    await timed('time-distance data, a route first looked at (3-4 blocks), four hours, 1200 px wide', routes.length, i => get(`${api}/graph?route=${routes[i]}&width=1200`))
    await timed('time-distance data, route UM1-UM4 again (kept in memory), four hours, 1200 px wide', 10, async () => { drawn = await get(`${api}/graph?route=UM1,UM2,UM3,UM4&width=1200`) })
    const thin = drawn!.thinning
    console.log(`     ${thin ? `thinned to ${thin.shown.toLocaleString('en')} of ${thin.points.toLocaleString('en')} points` : 'every point drawn'}`)
    const mid = Math.round((start + end) / 2)
    await timed('time-distance data, route UM1-UM4, a new 15-minute span zoomed to each time, 1200 px wide', 10, async (i) => {
      const from = mid + i * 600_000
      drawn = await get(`${api}/graph?route=UM1,UM2,UM3,UM4&width=1200&from=${from}&to=${from + 900_000}`)
    })
    const spanThin = drawn!.thinning
    console.log(`     ${spanThin ? `thinned to ${spanThin.shown.toLocaleString('en')} of ${spanThin.points.toLocaleString('en')} points` : `every point drawn (${drawn!.trains.reduce((n, t) => n + t.points.filter(Boolean).length, 0).toLocaleString('en')})`}`)

    const pid = server.pid!
    const idle = rssOf(pid)
    let peak = idle
    const sampler = setInterval(() => { peak = Math.max(peak, rssOf(pid)) }, 50)
    const te = performance.now()
    const response = await fetch(`${base}${api}/events.csv`, { headers: { cookie: client.cookieHeader } })
    let bytes = 0
    const reader = response.body!.getReader()
    for (let part = await reader.read(); !part.done; part = await reader.read()) bytes += part.value.length
    clearInterval(sampler)
    console.log(`   CSV export of ${EVENTS.toLocaleString('en')} rows: ${((performance.now() - te) / 1000).toFixed(1)} s, ${(bytes / 1e6).toFixed(0)} MB; server RSS idle ${(idle / 1e6).toFixed(0)} MB, peak ${(peak / 1e6).toFixed(0)} MB (+${((peak - idle) / 1e6).toFixed(0)} MB)`)
  } finally {
    server?.kill('SIGTERM')
    await sleep(500)
    await db.sequelize.close()
    await cluster.destroy()
    rmSync(dataDir, { recursive: true, force: true })
  }
}

if (import.meta.url === `file://${process.argv[1]}`) benchSessions().catch((error) => { console.error(error); process.exitCode = 1 })
