import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import mqtt, { type MqttClient } from 'mqtt'
import { QueryTypes } from 'sequelize'
import { openDatabase, type Database } from '../../server/database/connection'
import { databaseSettings } from '../../server/database/config'
import { createMigrator } from '../../server/database/migrator'
import { seedDemoData } from '../../server/database/seed'
import { applyDelta, applySnapshot, emptyView, type DeltaMessage, type SnapshotMessage } from '#shared/live/apply'
import type { ServerMessage } from '#shared/live/protocol'
import { DEMO, SessionClient } from '../support/http-client'
import { LiveClient } from '../support/live-client'
import { freePort, startMosquitto, startServer, type Running } from '../support/processes'
import { startTcpRelay, type TcpRelay } from '../support/tcp-relay'

// Several server processes, one layout: two built servers share Debian's mosquitto and one PostgreSQL.
// Exactly one runs the layout (an advisory lock); the other relays it to its panels and forwards commands.
const DB = 'blockbell_several'
const PREFIX = 'blockbell/v1/wrenfold/'
const NAMES = { signaller: 'Tam Oakridge', signaller2: 'Rhea Lintwhistle', viewer: 'Milo Brackenby' } // server/database/demo-accounts.ts
const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

type Server = Running & { url: string }

async function health(server: Server): Promise<{ instance: string, owns: string[] }> {
  return (await fetch(`${server.url}/api/health`)).json()
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
    const env = { BLOCKBELL_DB_NAME: DB, MQTT_URL: `mqtt://127.0.0.1:${mqttPort}`, BLOCKBELL_DETECTOR_DEBOUNCE_MS: '0', MQTT_PORT: '0' }
    a = await startServer({ ...env, BLOCKBELL_INSTANCE: 'hall-a', BLOCKBELL_DB_PORT: String(relayA.port), BLOCKBELL_DB_HOST: '127.0.0.1' })
    await waitForOwner([a], 10_000)
    b = await startServer({ ...env, BLOCKBELL_INSTANCE: 'hall-b' })
    device = await mqtt.connectAsync(`mqtt://127.0.0.1:${mqttPort}`, { protocolVersion: 5 })
  }, 120_000)

  afterAll(async () => {
    await device?.endAsync()
    await a?.stop()
    await b?.stop()
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
    expect((await health(a)).owns).toEqual([])
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
})
