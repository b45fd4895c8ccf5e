import { execFileSync } from 'node:child_process'
import { readFileSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import mqtt, { type MqttClient } from 'mqtt'
import { parse } from 'csv-parse/sync'
import { QueryTypes } from 'sequelize'
import { openDatabase, type Database } from '../../server/database/connection'
import { databaseSettings } from '../../server/database/config'
import type { LiveState } from '#shared/live/protocol'
import { BASE_URL, signedIn, type SessionClient } from '../support/http-client'
import { LiveClient } from '../support/live-client'

// Operating sessions on the real stack (server, embedded broker, engine, PostgreSQL from scripts/test.sh): a
// scripted run on Wrenfold Junction drives the real detectors topic; the review must agree with the script.
await setup({ host: BASE_URL })

const MQTT_URL = process.env.BLOCKBELL_TEST_MQTT_URL ?? 'mqtt://127.0.0.1:18839'
const PREFIX = 'blockbell/v1/wrenfold/'
const DEVICE = { username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo' }
const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

let device: MqttClient
let signaller: SessionClient, admin: SessionClient, viewer: SessionClient
let panel: LiveClient
let db: Database

const detector = (id: string, value: '0' | '1') => device.publishAsync(`${PREFIX}detector/${id}`, value)
/** Waits for the debounce (300 ms) and the journal's batch (100 ms) so what happened is stored. */
const settle = () => sleep(600)

async function endRunning() {
  const list = await admin.get('/api/sessions?layout=wrenfold')
  for (const s of list.body.sessions) if (!s.endedAt) await admin.post(`/api/sessions/${s.id}/end`)
}

beforeAll(async () => {
  device = await mqtt.connectAsync(MQTT_URL, { ...DEVICE, clientId: 'sessions-test-device' })
  ;[signaller, admin, viewer] = await Promise.all([signedIn('signaller'), signedIn('admin'), signedIn('viewer')])
  panel = await LiveClient.as('signaller')
  db = openDatabase({ ...databaseSettings(), database: 'blockbell_e2e' })
  await endRunning()
})
afterAll(async () => {
  await endRunning()
  await panel?.command({ action: 'release-area', area: 'main' })
  panel?.close()
  await device?.endAsync()
  await db?.sequelize.close()
})

describe('starting and ending a session', () => {
  it('refuses a bad start with a 400 naming the field, and a viewer with a 403', async () => {
    const empty = await signaller.post('/api/sessions', {})
    expect(empty.status).toBe(400)
    expect(empty.body.message).toMatch(/layout/)
    expect(empty.body.message).toMatch(/name/)
    const ratio = await signaller.post('/api/sessions', { layout: 'wrenfold', name: 'Bad ratio', fastClockRatio: 0 })
    expect(ratio.status).toBe(400)
    expect(ratio.body.message).toMatch(/^fastClockRatio/)
    const clock = await signaller.post('/api/sessions', { layout: 'wrenfold', name: 'Bad clock', fastClockRatio: 4, fastClockStart: '25:00' })
    expect(clock.body.message).toMatch(/fastClockStart/)
    expect((await signaller.post('/api/sessions', { layout: 'nowhere', name: 'x', fastClockRatio: 1 })).status).toBe(404)
    expect((await viewer.post('/api/sessions', { layout: 'wrenfold', name: 'x', fastClockRatio: 1 })).status).toBe(403)
  })

  it('lets one of two simultaneous starts win; the other gets a 409 naming the running session', async () => {
    const [a, b] = await Promise.all([
      signaller.post('/api/sessions', { layout: 'wrenfold', name: 'Race A', fastClockRatio: 4 }),
      admin.post('/api/sessions', { layout: 'wrenfold', name: 'Race B', fastClockRatio: 4 }),
    ])
    expect([a.status, b.status].sort()).toEqual([201, 409])
    const loser = a.status === 409 ? a : b
    expect(loser.body.message).toMatch(/already running on Wrenfold Junction: “Race [AB]”/)
    const winner = a.status === 201 ? a : b
    expect((await signaller.post(`/api/sessions/${winner.body.id}/end`)).status).toBe(200)
    expect((await signaller.post(`/api/sessions/${winner.body.id}/end`)).status).toBe(409)
    expect((await signaller.post('/api/sessions/999999/end')).status).toBe(404)
  })
})

interface Capture { at: number, state: LiveState }

describe('a scripted session', () => {
  let id: number
  const captures: Capture[] = []
  let signallerId: number

  async function capture() {
    await settle()
    const snap = await panel.snapshot()
    captures.push({ at: snap.serverTime, state: snap.state })
  }

  beforeAll(async () => {
    signallerId = (panel.messages.find(m => m.type === 'welcome') as { user: { id: number } }).user.id
    for (const t of ['T1', 'T2', 'T3', 'T4', 'T5', 'T6', 'T7']) await device.publishAsync(`${PREFIX}turnout/${t}`, 'normal')
    for (const d of ['D01', 'D02', 'D03', 'D04']) await detector(d, '0')
    await settle()
    await panel.command({ action: 'take-area', area: 'main' })
    const started = await signaller.post('/api/sessions', { layout: 'wrenfold', name: 'Up main evening', fastClockRatio: 4, fastClockStart: '06:30', notes: 'one train' })
    expect(started.status).toBe(201)
    id = started.body.id
    await capture()
    await detector('D01', '1')
    await settle()
    expect(await panel.command({ action: 'interpose', block: 'UM1', description: '1F23' })).toMatchObject({ ok: true })
    await capture()
    await detector('D02', '1')
    await sleep(1100)
    await detector('D01', '0')
    await capture()
    const rev = (await panel.snapshot()).state.signalRevisions.SU3!
    expect(await panel.command({ action: 'set-override', signal: 'SU3', mode: 'hold', revision: rev })).toMatchObject({ ok: true })
    await detector('D03', '1')
    await sleep(1300)
    await detector('D02', '0')
    await sleep(400)
    await detector('D04', '1') // past SU3 at danger
    await capture()
    const alarm = (await panel.snapshot()).state.alarms.find(a => a.acknowledgedAt === null)!
    await sleep(700)
    expect(await panel.command({ action: 'acknowledge', alarm: alarm.id })).toMatchObject({ ok: true })
    await detector('D03', '0')
    await capture()
    await detector('D04', '0')
    await sleep(40)
    await detector('D04', '1') // a dropout in UM4
    const rev2 = (await panel.snapshot()).state.signalRevisions.SU3!
    await panel.command({ action: 'set-override', signal: 'SU3', mode: 'auto', revision: rev2 })
    await detector('D04', '0')
    await capture()
    expect((await signaller.post(`/api/sessions/${id}/end`)).status).toBe(200)
    await settle()
  })

  it('shows the session and the server clock on every panel while it runs', async () => {
    const first = captures[0]!
    expect(first.at).toBeGreaterThan(0)
    const row = await viewer.get(`/api/sessions/${id}`)
    expect(row.body.session).toMatchObject({ name: 'Up main evening', fastClockRatio: 4, fastClockStart: '06:30', notes: 'one train', running: false })
    const snap = await panel.snapshot()
    expect(snap.session).toBeNull()
    expect(Math.abs(snap.serverTime - Date.now())).toBeLessThan(2000)
  })

  it('stores every journal entry of the run with the session', async () => {
    const [{ outside }] = await db.sequelize.query<{ outside: string }>(`SELECT count(*) AS outside FROM events
      WHERE layout_id = (SELECT layout_id FROM operating_sessions WHERE id = :id) AND session_id IS NULL
      AND at BETWEEN (SELECT started_at FROM operating_sessions WHERE id = :id) + interval '50 ms' AND (SELECT ended_at FROM operating_sessions WHERE id = :id) - interval '50 ms'`,
    { replacements: { id }, type: QueryTypes.SELECT }) as [{ outside: string }]
    expect(Number(outside)).toBe(0)
  })

  it('replays the state at each captured moment exactly as the live panel had it', async () => {
    expect(captures.length).toBe(6)
    for (const c of captures) {
      const reply = await viewer.get(`/api/sessions/${id}/replay?at=${c.at}`)
      expect(reply.status).toBe(200)
      const s = reply.body.state
      expect(s.occupied).toEqual(c.state.occupied)
      expect(s.turnouts).toEqual(c.state.turnouts)
      expect(s.overrides).toEqual(c.state.overrides)
      expect(s.descriptions).toEqual(c.state.descriptions)
      expect(s.alarms).toEqual(c.state.alarms)
      expect(s.indications).toEqual(c.state.indications)
    }
    // The capture after the signal was passed at danger really differs from the one before it.
    expect(captures[3]!.state.alarms.length).toBeGreaterThan(captures[2]!.state.alarms.length)
    expect((await viewer.get(`/api/sessions/${id}/replay?at=soon`)).status).toBe(400)
  })

  it('sums up what the script did: moves, the signal passed at danger and its acknowledgement, dropouts per block, areas, commands', async () => {
    const { summary } = (await viewer.get(`/api/sessions/${id}`)).body.session
    const train = summary.trains.find((t: { description: string }) => t.description === '1F23')
    expect(train.moves).toBe(3) // UM1 (interposed) -> UM2 -> UM3 -> UM4
    expect(summary.dangerPasses).toHaveLength(1)
    expect(summary.dangerPasses[0]).toMatchObject({ signal: 'SU3', block: 'UM4', description: '1F23', acknowledgedBy: 'Tam Oakridge' })
    expect(summary.dangerPasses[0].secondsToAcknowledge).toBeGreaterThanOrEqual(0.7)
    expect(summary.dropouts).toEqual([{ block: 'UM4', blockName: 'Up departure', count: 1 }])
    expect(summary.areas).toEqual([expect.objectContaining({ area: 'main', person: 'Tam Oakridge' })])
    const kinds = Object.fromEntries(summary.commands.map((c: { kind: string, count: number }) => [c.kind, c.count]))
    expect(kinds).toMatchObject({ 'interpose': 1, 'set-override': 2, 'acknowledge': 1 })
    expect(summary.scale).toEqual({ name: 'OO', ratio: 76.2 })
    // Scale speed from the engine over UM2 (1500 mm): time from entering UM2 to entering UM3, real seconds.
    const um2 = summary.speeds.find((s: { block: string }) => s.block === 'UM2')
    expect(um2.lengthMm).toBe(1500)
    expect(um2.kmh).toBeCloseTo(1.5 / um2.seconds * 76.2 * 3.6, 6)
    const list = await viewer.get('/api/sessions?layout=wrenfold')
    expect(list.body.sessions[0]).toMatchObject({ id, trainMoves: 3, signalsPassedAtDanger: 1, dropouts: 1, operators: ['Tam Oakridge'] })
  })

  it('filters the log on the server, with each row in words', async () => {
    const get = (q: string) => viewer.get(`/api/sessions/${id}/events?limit=500&${q}`)
    const alarms = (await get('kind=alarm')).body.rows
    expect(alarms.map((r: { text: string }) => r.text)).toEqual(['SU3 passed at danger by 1F23 entering UM4'])
    for (const r of (await get('signal=SU3')).body.rows) expect(r.subject).toBe('SU3')
    for (const r of (await get('block=UM4')).body.rows) expect(['UM4', 'D04']).toContain(r.subject)
    const described = (await get('description=1F23')).body.rows
    expect(new Set(described.map((r: { kind: string }) => r.kind))).toEqual(new Set(['command', 'description', 'alarm', 'speed', 'alarm-acknowledged']))
    for (const r of (await get(`user=${signallerId}`)).body.rows) expect(r.person).toBe('Tam Oakridge')
    const all = (await get('')).body.rows
    const mid = all[Math.floor(all.length / 2)].at
    for (const r of (await get(`from=${encodeURIComponent(mid)}`)).body.rows) expect(r.at >= mid).toBe(true)
    for (const r of (await get(`to=${encodeURIComponent(mid)}`)).body.rows) expect(r.at <= mid).toBe(true)
    const desc = (await get('order=desc')).body.rows.map((r: { id: string }) => r.id)
    expect(desc).toEqual(all.map((r: { id: string }) => r.id).reverse())
    expect((await get('block=XX9')).status).toBe(400)
    expect((await get('after=bm9wZQ')).body.message).toMatch(/^after:/)
    expect((await get('limit=0')).body.message).toMatch(/^limit/)
  })

  it('exports the log as CSV (RFC 4180) that parses back to the rows of the log', async () => {
    const response = await fetch(`${BASE_URL}/api/sessions/${id}/events.csv`, { headers: { cookie: viewer.cookieHeader } })
    expect(response.headers.get('content-type')).toMatch(/^text\/csv/)
    const text = await response.text()
    expect(text.split('\r\n')[0]).toBe('id,time,kind,subject,person,text,payload')
    expect(text).toMatch(/"\{""/) // a JSON payload: quoted, its quotes doubled (RFC 4180 §2.7)
    const records = parse(text, { columns: true, record_delimiter: '\r\n' }) as Record<string, string>[]
    const rows = (await viewer.get(`/api/sessions/${id}/events?limit=500`)).body.rows
    expect(records.map(r => ({ id: r.id, at: r.time, kind: r.kind, subject: r.subject || null, person: r.person || null, text: r.text })))
      .toEqual(rows)
    const stored = await db.sequelize.query<{ id: string, payload: unknown }>(`SELECT id::text, payload FROM events WHERE session_id = :id ORDER BY events.id`, { replacements: { id }, type: QueryTypes.SELECT })
    expect(records.map(r => JSON.parse(r.payload!))).toEqual(stored.map(s => s.payload))
  })

  let firstGraph: unknown
  it('gives the time-distance graph of a route: the train line in route order and the signal passed at danger', async () => {
    const graph = (await viewer.get(`/api/sessions/${id}/graph?route=UM1,UM2,UM3,UM4`)).body
    firstGraph = graph
    expect(graph.route.map((b: { startMm: number }) => b.startMm)).toEqual([0, 2200, 3700, 5500])
    const line = graph.trains.find((t: { description: string }) => t.description === '1F23')
    const distances = line.points.filter(Boolean).map((p: [number, number]) => p[1])
    expect(distances.slice(0, 4)).toEqual([0, 2200, 3700, 5500])
    expect(graph.dangerPasses).toEqual([expect.objectContaining({ signal: 'SU3', mm: 5500, description: '1F23' })])
    expect((await viewer.get(`/api/sessions/${id}/graph?route=UM1,NOPE`)).body.message).toMatch(/^route:/)
  })

  it('keeps keyset pages whole while new events arrive: no row skipped, none repeated', async () => {
    const started = await signaller.post('/api/sessions', { layout: 'wrenfold', name: 'Busy paging', fastClockRatio: 1 })
    const busy = started.body.id
    for (let i = 0; i < 6; i++) { await detector('D05', i % 2 ? '0' : '1'); await sleep(60) }
    await settle()
    const seen: string[] = []
    let after: string | null = null
    let n = 0
    do {
      const page: { body: { rows: { id: string }[], next: string | null } } = await viewer.get(`/api/sessions/${busy}/events?limit=3${after ? `&after=${after}` : ''}`)
      seen.push(...page.body.rows.map((r: { id: string }) => r.id))
      after = page.body.next
      // new events arrive between pages
      if (n++ < 4) await detector('D05', n % 2 ? '1' : '0')
      await sleep(450)
    } while (after)
    await detector('D05', '0')
    await signaller.post(`/api/sessions/${busy}/end`)
    await settle()
    expect(new Set(seen).size).toBe(seen.length)
    const ids = seen.map(BigInt)
    for (let i = 1; i < ids.length; i++) expect(ids[i]! > ids[i - 1]!).toBe(true)
    const stored = await db.sequelize.query<{ id: string }>(`SELECT id::text FROM events WHERE session_id = :busy AND events.id <= :last ORDER BY events.id`,
      { replacements: { busy, last: seen[seen.length - 1] }, type: QueryTypes.SELECT })
    expect(seen).toEqual(stored.map(s => s.id))
  })

  it('draws the same graph from the train moves stored once the session has settled', async () => {
    const endedAt = Date.parse((await viewer.get(`/api/sessions/${id}`)).body.session.endedAt)
    await sleep(Math.max(0, endedAt + 16_000 - Date.now()))
    expect((await viewer.get(`/api/sessions/${id}/graph?route=UM1,UM2,UM3,UM4`)).body).toEqual(firstGraph)
    // asked again (the server keeps a settled session's graphs in memory), by another role too: the same graph
    expect((await admin.get(`/api/sessions/${id}/graph?route=UM1,UM2,UM3,UM4`)).body).toEqual(firstGraph)
    const [stored] = await db.sequelize.query<{ n: string }>(`SELECT count(*) AS n FROM session_graph_data WHERE session_id = :id`, { replacements: { id }, type: QueryTypes.SELECT })
    expect(Number(stored!.n)).toBe(1)
    // a span of it, and a span outside it
    const line = (firstGraph as { trains: { description: string, points: ([number, number] | null)[] }[] }).trains.find(t => t.description === '1F23')!
    const [second, third] = line.points.filter(Boolean).slice(1, 3) as [[number, number], [number, number]]
    const span = (await viewer.get(`/api/sessions/${id}/graph?route=UM1,UM2,UM3,UM4&from=${second[0]}&to=${third[0]}`)).body
    expect(span.trains.find((t: { description: string }) => t.description === '1F23').points.filter(Boolean).map((p: [number, number]) => p[1])).toEqual(expect.arrayContaining([2200, 3700]))
    expect(span.thinning).toBeNull()
    const outside = await viewer.get(`/api/sessions/${id}/graph?route=UM1,UM2&from=1000&to=2000`)
    expect(outside.status).toBe(400)
    expect(outside.body.message).toMatch(/^from:/)
    expect((await viewer.get(`/api/sessions/${id}/graph?route=UM1&width=20`)).body.message).toMatch(/^width:/)
  })

  it('lets only an admin delete the log, naming what goes; its checkpoints go with it', async () => {
    expect((await signaller.request('DELETE', `/api/sessions/${id}`, { confirm: 'Up main evening' })).status).toBe(403)
    const preview = await admin.get(`/api/sessions/${id}/delete-preview`)
    expect(preview.body).toMatchObject({ name: 'Up main evening', events: expect.any(Number), checkpoints: expect.any(Number) })
    expect(preview.body.checkpoints).toBeGreaterThanOrEqual(1)
    expect((await admin.request('DELETE', `/api/sessions/${id}`, { confirm: 'wrong name' })).body.message).toMatch(/^confirm:/)
    const gone = await admin.request('DELETE', `/api/sessions/${id}`, { confirm: 'Up main evening' })
    expect(gone.status).toBe(200)
    expect(gone.body.deleted).toEqual({ id, events: preview.body.events, checkpoints: preview.body.checkpoints })
    const [{ left }] = await db.sequelize.query<{ left: string }>(`SELECT (SELECT count(*) FROM events WHERE session_id = :id) + (SELECT count(*) FROM session_checkpoints WHERE session_id = :id) AS left`,
      { replacements: { id }, type: QueryTypes.SELECT }) as [{ left: string }]
    expect(Number(left)).toBe(0)
    expect((await viewer.get(`/api/sessions/${id}`)).status).toBe(404)
    expect((await viewer.get(`/api/sessions/${id}/graph?route=UM1,UM2,UM3,UM4`)).status).toBe(404)
  })
})

describe('a session reviewed after its layout changed', () => {
  it('replays, draws and names the layout version the session ran on, not the one saved afterwards', async () => {
    const wrenfold = (await admin.get('/api/layouts')).body.layouts.find((l: { slug: string }) => l.slug === 'wrenfold')
    const copy = await admin.post('/api/layouts', { name: 'Wrenfold version check', copyOf: wrenfold.id })
    expect(copy.status).toBe(201)
    const slug = copy.body.slug as string
    try {
      // a new layout's runtime starts at once, but not in the same turn as the reply
      let started: { status: number, body: { id: number } } | undefined
      await expect.poll(async () => {
        started = await signaller.post('/api/sessions', { layout: slug, name: 'Before the siding', fastClockRatio: 1 })
        return started.status
      }, { timeout: 5000 }).toBe(201)
      const session = started!.body.id
      await device.publishAsync(`blockbell/v1/${slug}/detector/D02`, '1')
      await settle()
      const occupiedAt = Date.now()
      await device.publishAsync(`blockbell/v1/${slug}/detector/D02`, '0')
      await settle()
      expect((await signaller.post(`/api/sessions/${session}/end`)).status).toBe(200)

      // afterwards the layout gets a new version: a longer UM2 and a new siding
      const current = (await admin.get(`/api/layouts/${copy.body.id}`)).body.layout
      const definition = structuredClone(current.definition)
      definition.blocks.find((b: { id: string }) => b.id === 'UM2').lengthMm = 2500
      definition.blocks.push({ id: 'XS1', name: 'Spare siding', lengthMm: 900, detectors: ['D99'] })
      const saved = await admin.request('PUT', `/api/layouts/${copy.body.id}`, { definition, baseVersion: current.version })
      expect(saved.body).toMatchObject({ version: current.version + 1, current: true })

      const review = (await viewer.get(`/api/sessions/${session}`)).body.session
      expect(review).toMatchObject({ layoutVersion: current.version, layoutVersionRecorded: true })
      expect(review.definition.blocks.map((b: { id: string }) => b.id)).not.toContain('XS1')
      expect(review.blocks.find((b: { id: string }) => b.id === 'UM2').lengthMm).toBe(1500)
      const replay = (await viewer.get(`/api/sessions/${session}/replay?at=${occupiedAt}`)).body
      expect(replay.state.occupied).toMatchObject({ UM2: true })
      expect(Object.keys(replay.state.occupied).sort()).toEqual(review.definition.blocks.map((b: { id: string }) => b.id).sort())
      // UM3 starts where the 1,500 mm UM2 of the session's version ends (demo-layout.json lengths)
      const graph = (await viewer.get(`/api/sessions/${session}/graph?route=UM1,UM2,UM3`)).body
      expect(graph.route.map((b: { startMm: number }) => b.startMm)).toEqual([0, 2200, 3700])
      expect((await viewer.get(`/api/sessions/${session}/events?block=XS1`)).status).toBe(400)
    } finally {
      await admin.patch(`/api/layouts/${copy.body.id}`, { archived: true })
    }
  })
})

function serverPid(): string {
  const port = new URL(BASE_URL).port
  const out = execFileSync('ss', ['-ltnpH', `sport = :${port}`]).toString()
  const pid = /pid=(\d+)/.exec(out)?.[1]
  if (!pid) throw new Error(`no process listening on port ${port}: ${out}`)
  return pid
}

function serverRss(pid: string): number {
  const status = readFileSync(`/proc/${pid}/status`, 'utf8')
  return Number(/VmRSS:\s+(\d+) kB/.exec(status)![1]) * 1024
}

describe('CSV export of a large log', () => {
  it('streams 200,000 rows, waiting for a reader that pauses instead of building the file in memory', async () => {
    const started = await admin.post('/api/sessions', { layout: 'wrenfold', name: 'Large export', fastClockRatio: 1 })
    const big = started.body.id
    await admin.post(`/api/sessions/${big}/end`)
    await db.sequelize.query(`INSERT INTO events (layout_id, session_id, at, type, subject, payload)
      SELECT s.layout_id, s.id, s.started_at + (g * interval '1 ms'), 'detector-input', 'D05', jsonb_build_object('type', 'detector', 'detector', 'D05', 'occupied', g % 2 = 0, 'note', repeat('x', 200))
      FROM operating_sessions s, generate_series(1, 200000) g WHERE s.id = :big`, { replacements: { big } })
    const pid = serverPid()
    const idle = serverRss(pid)
    let peak = idle
    const sampler = setInterval(() => { peak = Math.max(peak, serverRss(pid)) }, 50)
    const response = await fetch(`${BASE_URL}/api/sessions/${big}/events.csv`, { headers: { cookie: admin.cookieHeader } })
    const reader = response.body!.getReader()
    let bytes = 0
    let lines = 0
    const take = (value: Uint8Array) => {
      bytes += value.length
      for (const b of value) if (b === 10) lines++
    }
    // A reader that stops after the first chunk: a server that streams waits for it; one that builds the
    // file (about 75 MB of text) grows by it meanwhile.
    take((await reader.read()).value!)
    const paused = serverRss(pid)
    await new Promise(resolve => setTimeout(resolve, 2000))
    const grewWhilePaused = serverRss(pid) - paused
    for (;;) {
      const { done, value } = await reader.read()
      if (done) break
      take(value)
    }
    clearInterval(sampler)
    console.log(`CSV export: ${lines - 1} rows, ${(bytes / 1e6).toFixed(1)} MB; server RSS idle ${(idle / 1e6).toFixed(0)} MB, peak ${(peak / 1e6).toFixed(0)} MB, at the first chunk ${(paused / 1e6).toFixed(0)} MB, grew ${(grewWhilePaused / 1e6).toFixed(1)} MB while the reader paused`)
    expect(lines).toBeGreaterThanOrEqual(200_001)
    expect(bytes).toBeGreaterThan(60e6)
    expect(paused - idle).toBeLessThan(50e6) // the first rows came before any file was built
    expect(grewWhilePaused).toBeLessThan(40e6) // well under the 72 MB still to come
    await admin.request('DELETE', `/api/sessions/${big}`, { confirm: 'Large export' })
  }, 300_000)
})
