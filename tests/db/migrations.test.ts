import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { QueryTypes } from 'sequelize'
import { openDatabase, type Database } from '../../server/database/connection'
import { databaseSettings } from '../../server/database/config'
import { createMigrator } from '../../server/database/migrator'
import { seedDemoData } from '../../server/database/seed'
import { migrations } from '../../server/database/migrations'

// Runs against the real PostgreSQL started by scripts/test.sh, in a database of its own.
const settings = { ...databaseSettings(), database: process.env.BLOCKBELL_DB_TEST_NAME ?? 'blockbell_db_tests' }
let db: Database

async function tableNames(): Promise<string[]> {
  const rows = await db.sequelize.query<{ name: string }>(
    `SELECT tablename AS name FROM pg_tables WHERE schemaname = 'public' ORDER BY tablename`, { type: QueryTypes.SELECT })
  return rows.map(r => r.name)
}

beforeAll(async () => {
  db = openDatabase(settings)
  await createMigrator(db.sequelize).down({ to: 0 })
})
afterAll(async () => { await db.sequelize.close() })

describe('migrations', () => {
  it('apply from an empty database and create every table', async () => {
    const done = await createMigrator(db.sequelize).up()
    expect(done.map(m => m.name)).toEqual(migrations.map(m => m.name))
    expect(await tableNames()).toEqual(['block_tallies', 'cleaning_thresholds', 'cleanings', 'devices', 'ended_sessions', 'events', 'invitations', 'layout_owners', 'layout_versions', 'layout_wiring', 'layouts', 'maintenance_task_log', 'maintenance_tasks', 'migrations', 'operating_sessions', 'outbox', 'password_resets', 'sent_digests', 'session_checkpoints', 'session_graph_data', 'session_train_steps', 'stock_items', 'stock_runs', 'stock_services', 'uploads', 'users'])
  })

  it('index the journal for time-range and per-session queries', async () => {
    const rows = await db.sequelize.query<{ indexname: string, indexdef: string }>(
      `SELECT indexname, indexdef FROM pg_indexes WHERE tablename = 'events'`, { type: QueryTypes.SELECT })
    const defs = Object.fromEntries(rows.map(r => [r.indexname, r.indexdef]))
    expect(defs.events_layout_time).toMatch(/\(layout_id, at, id\)/)
    expect(defs.events_session).toMatch(/\(session_id, id\)/)
  })

  it('key the train steps by session and journal order, copied from the journal by a trigger', async () => {
    const [pk] = await db.sequelize.query<{ indexdef: string }>(
      `SELECT indexdef FROM pg_indexes WHERE tablename = 'session_train_steps' AND indexname = 'session_train_steps_pkey'`, { type: QueryTypes.SELECT })
    expect(pk!.indexdef).toMatch(/\(session_id, event_id\)/)
    const triggers = await db.sequelize.query<{ tgname: string }>(
      `SELECT tgname FROM pg_trigger WHERE tgrelid = 'events'::regclass AND NOT tgisinternal`, { type: QueryTypes.SELECT })
    // the journal's triggers: train steps for the session review, block tallies for the maintenance counters
    expect(triggers.map(t => t.tgname).sort()).toEqual(['events_block_tallies_add', 'events_block_tallies_remove', 'events_session_train_steps'])
    const [column] = await db.sequelize.query<{ n: string }>(
      `SELECT count(*) AS n FROM information_schema.columns WHERE table_name = 'operating_sessions' AND column_name = 'layout_version'`, { type: QueryTypes.SELECT })
    expect(Number(column!.n)).toBe(1)
  })

  it('revert every step and apply again', async () => {
    const migrator = createMigrator(db.sequelize)
    await migrator.down({ to: 0 })
    expect(await tableNames()).toEqual(['migrations'])
    await migrator.up()
    expect((await migrator.pending()).length).toBe(0)
  })
})

describe('models on the migrated schema', () => {
  it('store a user and refuse a role outside admin/signaller/viewer', async () => {
    const user = await db.models.User.create({ email: 'model-test@fernhollow.example', name: 'Ivo Stane', role: 'viewer', passwordHash: 'x' })
    expect(user.id).toBeGreaterThan(0)
    await expect(db.models.User.create({ email: 'bad-role@fernhollow.example', name: 'Bad', role: 'driver' as never, passwordHash: 'x' }))
      .rejects.toThrow(/users_role_check/)
    await expect(db.models.User.create({ email: 'model-test@fernhollow.example', name: 'Twice', role: 'viewer', passwordHash: 'x' }))
      .rejects.toThrow()
  })

  it('store a layout with its JSONB definition and a version history', async () => {
    const layout = await db.models.Layout.create({ slug: 'bench-loop', name: 'Bench loop', definition: { schema: 1, blocks: [{ id: 'B1' }] } })
    expect(layout.version).toBe(1)
    await db.models.LayoutVersion.create({ layoutId: layout.id, version: 1, definition: layout.definition, createdBy: null })
    await expect(db.models.LayoutVersion.create({ layoutId: layout.id, version: 1, definition: {}, createdBy: null })).rejects.toThrow()
    const [row] = await db.sequelize.query<{ n: number }>(`SELECT jsonb_array_length(definition->'blocks') AS n FROM layouts WHERE id = ${layout.id}`, { type: QueryTypes.SELECT })
    expect(row!.n).toBe(1)
  })

  it('copy a session\'s description entries and signals passed at danger into its train steps, and drop them with the session', async () => {
    const layout = await db.models.Layout.create({ slug: 'steps-test', name: 'Steps test', definition: {} })
    const session = await db.models.OperatingSession.create({ layoutId: layout.id, name: 'Steps evening', startedAt: new Date(), startedBy: null })
    const at = new Date('2026-03-14T19:00:00.250Z')
    await db.models.JournalEvent.bulkCreate([
      { layoutId: layout.id, sessionId: session.id, at, type: 'description', subject: 'UM2', payload: { description: '1F23', reason: 'step', from: 'UM1' }, userId: null },
      { layoutId: layout.id, sessionId: session.id, at, type: 'description', subject: 'UM1', payload: { description: null, reason: 'clear' }, userId: null },
      { layoutId: layout.id, sessionId: session.id, at, type: 'alarm', subject: 'SU3', payload: { alarm: { kind: 'spad', signal: 'SU3', block: 'UM4', description: '1F23', at: 1773514800900 } }, userId: null },
      { layoutId: layout.id, sessionId: session.id, at, type: 'alarm', subject: 'T1', payload: { alarm: { kind: 'turnout-moved', block: 'UM3', at: 'not a time' } }, userId: null },
      { layoutId: layout.id, sessionId: session.id, at, type: 'block', subject: 'UM2', payload: { occupied: true }, userId: null },
      { layoutId: layout.id, sessionId: null, at, type: 'description', subject: 'UM2', payload: { description: '1F99', reason: 'step' }, userId: null },
    ])
    const steps = await db.sequelize.query(`SELECT at_ms::text, block, description, reason, signal FROM session_train_steps WHERE session_id = :id ORDER BY event_id`,
      { replacements: { id: session.id }, type: QueryTypes.SELECT })
    expect(steps).toEqual([
      { at_ms: String(at.getTime()), block: 'UM2', description: '1F23', reason: 'step', signal: null },
      { at_ms: String(at.getTime()), block: 'UM1', description: null, reason: 'clear', signal: null },
      { at_ms: '1773514800900', block: 'UM4', description: '1F23', reason: 'spad', signal: 'SU3' },
    ])
    await db.sequelize.query(`DELETE FROM events WHERE session_id = :id`, { replacements: { id: session.id } })
    await session.destroy()
    const [left] = await db.sequelize.query<{ n: string }>(`SELECT count(*) AS n FROM session_train_steps WHERE session_id = :id`, { replacements: { id: session.id }, type: QueryTypes.SELECT })
    expect(Number(left!.n)).toBe(0)
  })

  it('journal events with a 64-bit id, payload and session, in order', async () => {
    const layout = await db.models.Layout.create({ slug: 'journal-test', name: 'Journal test', definition: {} })
    const session = await db.models.OperatingSession.create({ layoutId: layout.id, name: 'Evening running', startedAt: new Date(), startedBy: null })
    const at = new Date('2026-03-14T19:00:00Z')
    await db.models.JournalEvent.bulkCreate([1, 2, 3].map(n => ({
      layoutId: layout.id, sessionId: session.id, at: new Date(at.getTime() + n), type: 'detector', subject: `D0${n}`, payload: { occupied: n % 2 === 1 }, userId: null,
    })))
    const rows = await db.models.JournalEvent.findAll({ where: { sessionId: session.id }, order: [['id', 'ASC']] })
    expect(rows.map(r => r.subject)).toEqual(['D01', 'D02', 'D03'])
    expect(typeof rows[0]!.id).toBe('string') // BIGINT comes back as a string: no precision lost past 2^53
    expect(rows[1]!.payload).toEqual({ occupied: false })
  })
})

describe('demo data', () => {
  it('is added once; running the seed again changes nothing', async () => {
    const first = await seedDemoData(db)
    expect(first.created).toContain('layout wrenfold')
    expect(first.created.filter(c => c.startsWith('user ')).length).toBe(4)
    const second = await seedDemoData(db)
    expect(second.created).toEqual([])
    expect(await db.models.Layout.count({ where: { slug: 'wrenfold' } })).toBe(1)
    expect(await db.models.LayoutVersion.count()).toBeGreaterThanOrEqual(1)
    const admin = await db.models.User.findOne({ where: { email: 'admin@fernhollow.example' } })
    expect(admin!.role).toBe('admin')
    expect(admin!.passwordHash).toMatch(/^\$scrypt\$/)
  })
})
