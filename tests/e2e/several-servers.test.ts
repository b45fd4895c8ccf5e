import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import pg from 'pg'
import mqtt, { type MqttClient } from 'mqtt'
import { QueryTypes } from 'sequelize'
import { openDatabase, type Database } from '../../server/database/connection'
import { databaseSettings } from '../../server/database/config'
import { createMigrator } from '../../server/database/migrator'
import { seedDemoData } from '../../server/database/seed'
import { applyDelta, applySnapshot, emptyView, type DeltaMessage, type SnapshotMessage } from '#shared/live/apply'
import type { LiveSession, ServerMessage } from '#shared/live/protocol'
import { DEMO, SessionClient } from '../support/http-client'
import { LiveClient } from '../support/live-client'
import { freePort, startMosquitto, startServer, type Running } from '../support/processes'
import { startTcpRelay, type TcpRelay } from '../support/tcp-relay'
import { LOCK_KEEPALIVE, lockConnectionConfig, OWNERSHIP_CHECK_TIMEOUT_MS, OWNERSHIP_TICK_MS } from '../../server/live/ownership'

// Several server processes, one layout: two built servers share Debian's mosquitto and one PostgreSQL.
// Exactly one runs the layout (an advisory lock); the other relays it to its panels and forwards commands.
const DB = 'blockbell_several'
const PREFIX = 'blockbell/v1/wrenfold/'
const NAMES = { signaller: 'Tam Oakridge', signaller2: 'Rhea Lintwhistle', viewer: 'Milo Brackenby' } // server/database/demo-accounts.ts
const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

type Server = Running & { url: string, admin?: SessionClient }

/** The health answer as an admin sees it (the layouts' slugs); anyone else gets only how many. */
async function health(server: Server): Promise<{ instance: string, layoutsOwned: number, owns: string[] }> {
  if (!server.admin) {
    server.admin = new SessionClient(server.url)
    const signIn = await server.admin.signIn(DEMO.admin.email, DEMO.admin.password)
    if (signIn.status !== 200) {
      server.admin = undefined
      throw new Error(`admin sign-in on ${server.url}: ${signIn.status}`)
    }
  }
  const reply = await server.admin.get('/api/health')
  if (!Array.isArray(reply.body?.owns)) throw new Error(`health of ${server.url}: ${reply.status} ${JSON.stringify(reply.body)}`)
  return reply.body
}

/** The socket's close code, once the server has closed it. */
function closed(panel: LiveClient, timeoutMs = 5000): Promise<number> {
  if (panel.socket.readyState === panel.socket.CLOSED) return Promise.resolve(-1)
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`the socket stayed open ${timeoutMs} ms`)), timeoutMs)
    panel.socket.once('close', (code) => { clearTimeout(timer); resolve(code) })
  })
}

async function waitForOwner(servers: Server[], timeoutMs: number): Promise<Server> {
  const until = Date.now() + timeoutMs
  while (Date.now() < until) {
    for (const server of servers) {
      const h = await health(server).catch(() => null)
      if (h?.owns.includes('wrenfold')) return server
    }
    await sleep(50)
  }
  throw new Error(`no server took wrenfold within ${timeoutMs} ms`)
}

async function panelOn(server: Server, role: keyof typeof DEMO): Promise<LiveClient> {
  const http = new SessionClient(server.url)
  await http.signIn(DEMO[role].email, DEMO[role].password)
  const panel = await LiveClient.open(http.cookieHeader, server.url)
  const first = await panel.subscribe('wrenfold')
  if (first.type !== 'snapshot') await panel.next(m => m.type === 'snapshot', 8000)
  return panel
}

/**
 * Folds a panel's messages as the panel does: snapshots reset the view, deltas must follow one another in
 * seq order. Returns the view and every delta that did not follow on (a gap the panel would resync).
 */
function fold(messages: ServerMessage[]) {
  const view = emptyView()
  const gaps: number[] = []
  for (const m of messages) {
    if (m.type === 'snapshot') applySnapshot(view, m as SnapshotMessage)
    else if (m.type === 'delta' && applyDelta(view, m as DeltaMessage) === 'gap') gaps.push(m.seq)
  }
  return { view, gaps }
}

describe('two server processes behind one broker and one database', () => {
  let db: Database
  let broker: Running
  let mqttPort: number
  let relayA: TcpRelay
  let a: Server
  let b: Server
  let c: Server | undefined
  let env: Record<string, string>
  let device: MqttClient
  const published: { detector: string, occupied: boolean, at: number }[] = []
  let lastAt = Date.now()

  async function publishDetector(detector: string, occupied: boolean): Promise<void> {
    const at = Math.max(Date.now(), lastAt + 1)
    lastAt = at
    published.push({ detector, occupied, at })
    await device.publishAsync(`${PREFIX}detector/${detector}`, JSON.stringify({ occupied, at }), { qos: 1 })
  }

  /** `n` detector changes, 40 ms apart, alternating on the two fiddle-yard detectors. */
  async function run(n: number): Promise<void> {
    for (let i = 0; i < n; i++) {
      const detector = i % 2 ? 'D14' : 'D13'
      const occupied = !published.filter(p => p.detector === detector).at(-1)?.occupied
      await publishDetector(detector, occupied)
      await sleep(40)
    }
  }

  const layoutId = async () => (await db.models.Layout.findOne({ where: { slug: 'wrenfold' } }))!.id
  const journalInputs = async () => db.sequelize.query<{ id: string, detector: string, occupied: boolean, at: string, epoch: string | null }>(`
    SELECT id, payload->>'detector' AS detector, (payload->>'occupied')::boolean AS occupied, payload->>'at' AS at, owner_epoch AS epoch
    FROM events WHERE layout_id = :layout AND type = 'detector-input' ORDER BY id`, { replacements: { layout: await layoutId() }, type: QueryTypes.SELECT })

  async function waitForJournal(count: number): Promise<void> {
    const until = Date.now() + 10_000
    while (Date.now() < until) {
      if ((await journalInputs()).length >= count) return
      await sleep(100)
    }
    throw new Error(`the journal did not reach ${count} detector inputs`)
  }

  beforeAll(async () => {
    const settings = { ...databaseSettings(), database: DB }
    db = openDatabase(settings)
    await createMigrator(db.sequelize).up()
    await seedDemoData(db)
    mqttPort = await freePort()
    broker = await startMosquitto(mqttPort)
    relayA = await startTcpRelay({ host: settings.host, port: settings.port })
    env = { BLOCKBELL_DB_NAME: DB, MQTT_URL: `mqtt://127.0.0.1:${mqttPort}`, BLOCKBELL_DETECTOR_DEBOUNCE_MS: '0', MQTT_PORT: '0' }
    a = await startServer({ ...env, BLOCKBELL_INSTANCE: 'hall-a', BLOCKBELL_DB_PORT: String(relayA.port), BLOCKBELL_DB_HOST: '127.0.0.1' })
    await waitForOwner([a], 10_000)
    b = await startServer({ ...env, BLOCKBELL_INSTANCE: 'hall-b' })
    device = await mqtt.connectAsync(`mqtt://127.0.0.1:${mqttPort}`, { protocolVersion: 5 })
  }, 120_000)

  afterAll(async () => {
    await device?.endAsync()
    await a?.stop()
    await b?.stop()
    await c?.stop()
    await relayA?.close()
    await broker?.stop()
    await db?.sequelize.close()
  })

  it('runs the layout in one process; panels on both see every delta in order and the same state; commands work from either side', async () => {
    expect(await health(a)).toMatchObject({ instance: 'hall-a', owns: ['wrenfold'] })
    expect(await health(b)).toMatchObject({ instance: 'hall-b', owns: [] })
    const onA = await panelOn(a, 'viewer')
    const onB = await panelOn(b, 'viewer')
    const signallerB = await panelOn(b, 'signaller')
    const signallerA = await panelOn(a, 'signaller2')

    // Commands from the process that does not run the layout go to the one that does, and back.
    expect(await signallerB.command({ action: 'take-area', area: 'main' })).toMatchObject({ ok: true })
    expect(await signallerA.command({ action: 'take-area', area: 'branch' })).toMatchObject({ ok: true })
    const refused = await signallerA.command({ action: 'take-area', area: 'main' })
    expect(refused.ok).toBe(false)
    const { state } = await signallerB.snapshot()
    expect(await signallerB.command({ action: 'set-override', signal: 'SU3', mode: 'hold', revision: state.signalRevisions.SU3 })).toMatchObject({ ok: true })

    await run(30)
    await waitForJournal(30)
    await sleep(300)
    const panels = [onA, onB, signallerA, signallerB]
    const finals = await Promise.all(panels.map(p => p.snapshot()))
    for (const [i, panel] of panels.entries()) {
      const { view, gaps } = fold(panel.messages.slice(0, panel.messages.indexOf(finals[i]!)))
      expect(gaps).toEqual([])
      expect(view.seq).toBe(finals[i]!.seq)
      expect(view.state.occupied).toEqual(finals[i]!.state.occupied)
      expect(view.state.overrides.SU3).toBe('hold')
      expect(view.areas.main?.name).toBe(NAMES.signaller)
      expect(view.areas.branch?.name).toBe(NAMES.signaller2)
    }
    // One state, whichever process the panel is on.
    for (const f of finals) expect(f.state).toEqual(finals[0]!.state)
    // The owner saw the operators of both processes.
    expect(finals[0]!.operators.map(o => o.name).sort()).toEqual([NAMES.signaller, NAMES.signaller2, NAMES.viewer].sort())
    for (const p of panels) p.close()
  })

  it('/api/health tells anyone which process answered and how many layouts it runs; only an admin sees which', async () => {
    const open = await (await fetch(`${a.url}/api/health`)).json()
    expect(open).toEqual({ status: 'ok', database: 'up', journal: { status: 'ok', setAside: 0 }, instance: 'hall-a', layoutsOwned: 1 })
    const viewer = new SessionClient(b.url)
    await viewer.signIn(DEMO.viewer.email, DEMO.viewer.password)
    expect((await viewer.get('/api/health')).body).toEqual({ status: 'ok', database: 'up', journal: { status: 'ok', setAside: 0 }, instance: 'hall-b', layoutsOwned: 0 })
    expect(await health(a)).toMatchObject({ instance: 'hall-a', layoutsOwned: 1, owns: ['wrenfold'] })
    expect(await health(b)).toMatchObject({ instance: 'hall-b', layoutsOwned: 0, owns: [] })
  })

  it('starting and ending a session through the process that does not run the layout: the owner does it, panels on both show it', async () => {
    const onA = await panelOn(a, 'viewer')
    const onB = await panelOn(b, 'viewer')
    const signaller = new SessionClient(b.url)
    await signaller.signIn(DEMO.signaller.email, DEMO.signaller.password)

    const bad = await signaller.post('/api/sessions', { layout: 'wrenfold', name: '', fastClockRatio: 4 })
    expect(bad.status).toBe(400)
    expect(bad.body.message).toMatch(/name/)
    const sessionChange = (panel: LiveClient, since: number, test: (session: LiveSession | null) => boolean) => panel.next(
      m => m.type === 'delta' && m.changes.some(c => c.type === 'session' && test(c.session)), 5000, since)
    let since = [onA.messages.length, onB.messages.length]
    const started = await signaller.post('/api/sessions', { layout: 'wrenfold', name: 'Thursday running night', fastClockRatio: 4 })
    expect(started.status).toBe(201)
    const id = started.body.id as number
    for (const [i, panel] of [onA, onB].entries()) await sessionChange(panel, since[i]!, s => s?.id === id && s.name === 'Thursday running night')
    // The owner saved the session's start state, as it does when the request reaches it directly.
    const [checkpoint] = await db.sequelize.query<{ n: string }>('SELECT count(*) AS n FROM session_checkpoints WHERE session_id = :id', { replacements: { id }, type: QueryTypes.SELECT })
    expect(Number(checkpoint!.n)).toBeGreaterThan(0)
    // A second start, through either process, is refused by the owner with its own message.
    const twice = await signaller.post('/api/sessions', { layout: 'wrenfold', name: 'Again', fastClockRatio: 1 })
    expect(twice.status).toBe(409)
    expect(twice.body.message).toMatch(/already running.*Thursday running night/)

    since = [onA.messages.length, onB.messages.length]
    const ended = await signaller.post(`/api/sessions/${id}/end`)
    expect(ended.status).toBe(200)
    for (const [i, panel] of [onA, onB].entries()) await sessionChange(panel, since[i]!, s => s === null)
    for (const panel of [onA, onB]) expect((await panel.snapshot()).session).toBeNull()
    expect((await signaller.post(`/api/sessions/${id}/end`)).status).toBe(409)
    expect((await signaller.post('/api/sessions/999999/end')).status).toBe(404)
    onA.close()
    onB.close()
  })

  it('disabling an account through the process that does not run the layout releases its area and closes its sockets on both', async () => {
    const holderOnA = await panelOn(a, 'signaller2')
    const holderOnB = await panelOn(b, 'signaller2')
    const watcherOnB = await panelOn(b, 'viewer')
    const taken = await holderOnA.command({ action: 'take-area', area: 'branch' })
    expect(taken.ok || (await holderOnA.snapshot()).areas.branch?.name === NAMES.signaller2).toBe(true)
    const admin = new SessionClient(b.url)
    await admin.signIn(DEMO.admin.email, DEMO.admin.password)
    const [person] = await db.sequelize.query<{ id: number }>('SELECT id FROM users WHERE email = :email', { replacements: { email: DEMO.signaller2.email }, type: QueryTypes.SELECT })
    const closedA = closed(holderOnA)
    const closedB = closed(holderOnB)
    const released = watcherOnB.change(c => c.type === 'areas' && !c.areas.branch)
    expect((await admin.patch(`/api/users/${person!.id}`, { disabled: true })).status).toBe(200)
    expect(await closedA).toBe(4001)
    expect(await closedB).toBe(4001)
    await released
    expect((await watcherOnB.snapshot()).areas.branch ?? null).toBeNull()
    expect((await admin.patch(`/api/users/${person!.id}`, { disabled: false })).status).toBe(200)
    watcherOnB.close()
  })

  it('signing out through one process closes that session\'s panels on the other', async () => {
    const http = new SessionClient(a.url)
    await http.signIn(DEMO.viewer.email, DEMO.viewer.password)
    const panel = await LiveClient.open(http.cookieHeader, b.url)
    await panel.subscribe('wrenfold')
    const gone = closed(panel)
    expect((await http.post('/api/auth/sign-out')).status).toBeLessThan(300)
    expect(await gone).toBe(4001)
  })

  it('a process whose database connection is cut gives up the layout and stops writing; the other takes over', async () => {
    const onB = await panelOn(b, 'viewer')
    const before = await journalInputs()
    const cutAt = Date.now()
    relayA.cut()
    const owner = await waitForOwner([b], 5000)
    const takeoverMs = Date.now() - cutAt
    expect(owner).toBe(b)
    expect(takeoverMs).toBeLessThan(5000)
    // The panel on the survivor starts again from the new owner's state.
    await onB.next(m => m.type === 'snapshot' && m.seq >= 2e9, 5000)
    // Without its database the cut process cannot check who asks: the public count says it runs nothing.
    expect(await (await fetch(`${a.url}/api/health`)).json()).toMatchObject({ instance: 'hall-a', layoutsOwned: 0 })
    await run(10)
    await waitForJournal(before.length + 10)
    relayA.restore()
    await sleep(2500)
    expect((await health(a)).owns).toEqual([])
    onB.close()
  })

  it('kill -9 of the owner: the other takes over within 5 s, its panels resync, no entry lost or doubled, never two writers', async () => {
    const onA = await panelOn(a, 'viewer')
    await run(10)
    await waitForJournal(published.length)
    const killedAt = Date.now()
    b.process.kill('SIGKILL')
    // The run goes on while no process owns the layout: the broker keeps these for the next owner.
    const during = run(20)
    const owner = await waitForOwner([a], 5000)
    const takeoverMs = Date.now() - killedAt
    await during
    expect(owner).toBe(a)
    expect(takeoverMs).toBeLessThan(5000)
    const resync = onA.messages.findIndex((m, i) => i > 0 && m.type === 'snapshot' && m.seq >= 3e9)
    expect(resync).toBeGreaterThan(0)
    await waitForJournal(published.length)
    await sleep(300)

    const rows = await journalInputs()
    const key = (r: { detector: string, occupied: boolean, at: number | string }) => `${r.detector}:${r.occupied}:${Number(r.at)}`
    expect(rows.map(key).sort()).toEqual(published.map(key).sort())
    // Epochs only ever go up along the journal: no former owner's row lands after a new owner's.
    const epochs = rows.map(r => Number(r.epoch))
    expect(epochs.every(e => e > 0)).toBe(true)
    expect(epochs).toEqual([...epochs].sort((x, y) => x - y))
    expect(new Set(epochs).size).toBe(3)
    const { view, gaps } = fold(onA.messages.slice(resync))
    expect(gaps).toEqual([])
    expect(view.state.occupied).toEqual((await onA.snapshot()).state.occupied)
    onA.close()
  })

  it('a silent network drop of the owner\'s database link: it stops within its check; PostgreSQL frees the lock after its keepalive, then another takes over', async () => {
    // PostgreSQL takes the keepalive settings the lock connection asks for (no server setting needed).
    const check = new pg.Client(lockConnectionConfig({ ...databaseSettings(), database: DB }, 'keepalive-check'))
    await check.connect()
    const shown = async (name: string) => (await check.query(`SHOW ${name}`)).rows[0][name]
    expect(await shown('tcp_keepalives_idle')).toBe(String(LOCK_KEEPALIVE.idleS))
    expect(await shown('tcp_keepalives_interval')).toBe(String(LOCK_KEEPALIVE.intervalS))
    expect(await shown('tcp_keepalives_count')).toBe(String(LOCK_KEEPALIVE.count))
    await check.end()

    c = await startServer({ ...env, BLOCKBELL_INSTANCE: 'hall-c' })
    await health(c)
    const onA = await panelOn(a, 'viewer')
    const [{ epoch: before }] = await db.sequelize.query<{ epoch: string }>('SELECT epoch FROM layout_owners WHERE layout_id = :id', { replacements: { id: await layoutId() }, type: QueryTypes.SELECT }) as [{ epoch: string }]
    const frozenAt = Date.now()
    relayA.freeze()
    // The owner's panels hear within its check (2 s, on a 1 s tick) that it no longer runs the layout.
    await onA.next(m => m.type === 'error' && /no longer runs the layout/.test(m.message), OWNERSHIP_CHECK_TIMEOUT_MS + OWNERSHIP_TICK_MS + 1500)
    const stoppedMs = Date.now() - frozenAt
    expect(a.output()).toMatch(/gives up layout \d+: lock connection failed: no answer within 2000 ms/)
    // The relay's own TCP stack still answers PostgreSQL's keepalive probes, so here PostgreSQL cannot see the
    // drop: it keeps the lock, and nobody else may take the layout meanwhile.
    await sleep(1500)
    expect((await health(c)).owns).toEqual([])
    // What PostgreSQL does once the probes go unanswered (LOCK_KEEPALIVE): the backend goes, the lock with it.
    const ended = await db.sequelize.query<{ done: boolean }>(`SELECT pg_terminate_backend(pid) AS done FROM pg_stat_activity
      WHERE datname = :db AND application_name = 'blockbell-owner-hall-a'`, { replacements: { db: DB }, type: QueryTypes.SELECT })
    expect(ended.map(r => r.done)).toEqual([true])
    const freedAt = Date.now()
    expect(await waitForOwner([c], 5000)).toBe(c)
    const takeoverMs = Date.now() - freedAt
    const [{ epoch: after }] = await db.sequelize.query<{ epoch: string }>('SELECT epoch FROM layout_owners WHERE layout_id = :id', { replacements: { id: await layoutId() }, type: QueryTypes.SELECT }) as [{ epoch: string }]
    expect(Number(after)).toBe(Number(before) + 1)
    relayA.restore()
    console.log(`silent drop: the owner stopped after ${stoppedMs} ms; takeover ${takeoverMs} ms after the lock was freed`)
    onA.close()
  }, 60_000)
})
