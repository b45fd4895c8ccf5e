// The event journal against a real PostgreSQL of its own: order, batching, keys that make a retried
// batch harmless, and entries PostgreSQL refuses.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { QueryTypes, type Sequelize } from 'sequelize'
import type { Database } from '../../server/database/connection'
import { createJournal, type Journal, type JournalOptions } from '../../server/live/journal'
import { journalEntryKey, newJournalBootId, prepareJournalEntry } from '../../server/live/journal-entry'
import { writeJournalBatch } from '../../server/live/journal-insert'
import { connectWithoutModels, startThrowawayPostgres, type ThrowawayPostgres } from '../support/postgres'
import { startPostgresProxy } from '../support/postgres-proxy'
import { freshLayout, numbered, range, removeScratchDirs, scratchDir, storedRows, waitUntil, writeGroups } from '../support/journal-checks'

let cluster: ThrowawayPostgres
let db: Database
const journals: Journal[] = []

function journal(options: Partial<JournalOptions> = {}, sequelize: Sequelize = db.sequelize): Journal {
  const j = createJournal({ sequelize, spillDir: scratchDir('journal-spill'), log: () => {}, ...options })
  journals.push(j)
  return j
}

beforeAll(async () => {
  cluster = await startThrowawayPostgres()
  db = await cluster.openMigrated()
})
afterAll(async () => {
  for (const j of journals) await j.close()
  await db?.sequelize.close()
  await cluster?.destroy()
  removeScratchDirs()
})

describe('event journal: order and batches', () => {
  it('stores entries in append order, a full batch per INSERT', async () => {
    const layoutId = await freshLayout(db)
    const j = journal({ batchSize: 500 })
    for (const n of range(0, 1234)) j.append(numbered(layoutId, n))
    await j.flush()

    const rows = await storedRows(db, layoutId)
    expect(rows.map(r => r.n)).toEqual(range(0, 1234))
    // xmin is "the identity (transaction ID) of the inserting transaction" (PostgreSQL 15 documentation,
    // 5.5 System Columns): one transaction per batch of at most 500.
    expect(writeGroups(rows)).toEqual([500, 500, 234])
    expect(j.stats()).toMatchObject({ written: 1234, queued: 0, spilled: 0, writeFailures: 0, databaseUp: true })
  })

  it('gathers the entries of one interval into one write, without being asked to flush', async () => {
    const layoutId = await freshLayout(db)
    const j = journal({ flushIntervalMs: 300 })
    for (const n of range(0, 5)) {
      j.append(numbered(layoutId, n))
      await new Promise(done => setTimeout(done, 10))
    }
    await waitUntil(() => j.stats().written === 5, 'the five entries are written')
    const rows = await storedRows(db, layoutId)
    expect(rows.map(r => r.n)).toEqual(range(0, 5))
    expect(writeGroups(rows)).toEqual([5])
  })

  it('keeps every field as appended', async () => {
    const layoutId = await freshLayout(db)
    const user = await db.models.User.create({ email: 'tamsin.reede@marrowvale.example', name: 'Tamsin Reede', role: 'signaller', passwordHash: 'x' })
    const session = await db.models.OperatingSession.create({ layoutId, name: 'Thursday running', startedAt: new Date(), startedBy: user.id })
    const at = Date.UTC(2026, 2, 14, 19, 30, 5, 123)
    const payload = { signal: 'S7', mode: 'hold', revision: 41, note: 'quote " and backslash \\ and ünïcode' }
    const j = journal()
    j.append({ layoutId, sessionId: session.id, at, type: 'command', subject: 'S7', payload, userId: user.id })
    await j.flush()

    const [row] = await db.sequelize.query<Record<string, unknown>>(
      `SELECT session_id, at, type, subject, payload, user_id, entry_key FROM events WHERE layout_id = :layoutId`,
      { replacements: { layoutId }, type: QueryTypes.SELECT })
    expect(row).toMatchObject({ session_id: session.id, type: 'command', subject: 'S7', payload, user_id: user.id })
    expect((row!.at as Date).getTime()).toBe(at) // timestamptz keeps microseconds, so milliseconds survive
    expect(row!.entry_key).toMatch(/^[0-9a-z]{9}-[0-9a-z]+-[0-9a-f]{6}-1$/)
  })

  it('keeps the payload as it was when appended, even if the caller changes the object later', async () => {
    const layoutId = await freshLayout(db)
    const j = journal()
    const payload: Record<string, unknown> = { occupied: true }
    j.append({ ...numbered(layoutId, 0), payload })
    payload.occupied = false
    await j.flush()
    const [row] = await db.sequelize.query<{ payload: unknown }>(`SELECT payload FROM events WHERE layout_id = ${layoutId}`, { type: QueryTypes.SELECT })
    expect(row!.payload).toEqual({ occupied: true })
  })
})

describe('event journal: a batch written twice is stored once', () => {
  it('the same batch written again adds nothing', async () => {
    const layoutId = await freshLayout(db)
    const bootId = newJournalBootId()
    const batch = range(1, 50).map(seq => prepareJournalEntry(numbered(layoutId, seq), seq, journalEntryKey(bootId, seq)).stored)
    const first = await writeJournalBatch(db.sequelize, batch)
    const again = await writeJournalBatch(db.sequelize, batch)
    // INSERT ... ON CONFLICT (entry_key) DO NOTHING skips a row whose key exists
    // (PostgreSQL 15 documentation, INSERT, "ON CONFLICT Clause").
    expect(first).toMatchObject({ inserted: 50, alreadyStored: 0 })
    expect(again).toMatchObject({ inserted: 0, alreadyStored: 50 })
    expect((await storedRows(db, layoutId)).map(r => r.n)).toEqual(range(1, 50))
  })

  it('a reply lost after the commit: the journal writes the batch again and each entry is stored once', async () => {
    const layoutId = await freshLayout(db)
    const proxy = await startPostgresProxy(cluster.settings)
    const viaProxy = connectWithoutModels({ ...cluster.settings, port: proxy.port })
    try {
      const j = journal({ retryMs: 100 }, viaProxy)
      const lost = proxy.loseReplyTo('INSERT INTO events')
      for (const n of range(0, 300)) j.append(numbered(layoutId, n))
      await lost
      // The rows are in the table already, but the journal was told nothing but "connection cut".
      expect((await storedRows(db, layoutId)).length).toBe(300)
      await waitUntil(() => j.stats().written === 300, 'the journal has the batch confirmed')

      expect(proxy.lost).toBe(1)
      expect(j.stats()).toMatchObject({ written: 300, alreadyStored: 300, databaseUp: true })
      expect(j.stats().writeFailures).toBeGreaterThanOrEqual(1)
      const rows = await storedRows(db, layoutId)
      expect(rows.map(r => r.n)).toEqual(range(0, 300))
      expect(new Set(rows.map(r => r.key)).size).toBe(300)
      await j.close()
    } finally {
      await viaProxy.close()
      await proxy.close()
    }
  })
})

describe('event journal: entries PostgreSQL refuses', () => {
  it('leaves out an entry naming an unknown layout, logs it, and stores the others in order', async () => {
    const layoutId = await freshLayout(db)
    const lines: string[] = []
    const j = journal({ log: line => lines.push(line) })
    for (const n of range(0, 10)) j.append(n === 6 ? { ...numbered(layoutId, n), layoutId: 987_654 } : numbered(layoutId, n))
    await j.flush()

    expect((await storedRows(db, layoutId)).map(r => r.n)).toEqual([0, 1, 2, 3, 4, 5, 7, 8, 9])
    expect(j.stats()).toMatchObject({ written: 9, rejected: 1, queued: 0 })
    expect(lines.join('\n')).toMatch(/entry \S+-7 \(detector B6 on layout 987654\) cannot be stored: .*foreign key/)
    // The journal carries on after the refusal.
    j.append(numbered(layoutId, 10))
    await j.flush()
    expect((await storedRows(db, layoutId)).at(-1)!.n).toBe(10)
  })

  it('cuts text longer than its column and keeps payloads that are not plain JSON', async () => {
    const layoutId = await freshLayout(db)
    const lines: string[] = []
    const j = journal({ log: line => lines.push(line) })
    const loop: Record<string, unknown> = { name: 'loop' }
    loop.self = loop
    expect(() => {
      j.append({ layoutId, sessionId: null, at: Date.now(), type: 'x'.repeat(60), subject: 'S'.repeat(100), payload: { n: 0 }, userId: null })
      j.append({ ...numbered(layoutId, 1), payload: loop })
      j.append({ ...numbered(layoutId, 2), payload: { big: 10n } as never })
      j.append({ ...numbered(layoutId, 3), at: Number.NaN })
    }).not.toThrow()
    await j.flush()

    const rows = await db.sequelize.query<{ type: string, subject: string, payload: Record<string, unknown> }>(
      `SELECT type, subject, payload FROM events WHERE layout_id = ${layoutId} ORDER BY id`, { type: QueryTypes.SELECT })
    expect(rows).toHaveLength(4)
    expect(rows[0]!.type).toHaveLength(48) // events.type is VARCHAR(48), events.subject VARCHAR(64) (migration 0001)
    expect(rows[0]!.subject).toHaveLength(64)
    expect(rows[1]!.payload.unserialisable).toMatch(/circular/i)
    expect(rows[2]!.payload.unserialisable).toMatch(/bigint/i)
    expect(lines.filter(l => /cut to|could not be serialised|is not a number; the append time is used/.test(l))).toHaveLength(4)
  })

  it('stores an entry holding the character U+0000, which PostgreSQL text and jsonb refuse, with U+FFFD instead', async () => {
    await expect(db.sequelize.query(`SELECT '{"a":"\\u0000"}'::jsonb`)).rejects.toThrow(/unsupported Unicode escape|cannot be converted to text/)
    await expect(db.sequelize.query(`SELECT convert_from('\\x00'::bytea, 'UTF8')::text`)).rejects.toThrow(/invalid byte sequence/)
    const layoutId = await freshLayout(db)
    const j = journal()
    j.append({ ...numbered(layoutId, 0), subject: 'B\u00001', payload: { text: 'left\u0000right' } })
    await j.flush()
    const [row] = await db.sequelize.query<{ subject: string, payload: { text: string } }>(
      `SELECT subject, payload FROM events WHERE layout_id = ${layoutId}`, { type: QueryTypes.SELECT })
    expect(row).toEqual({ subject: 'B\uFFFD1', payload: { text: 'left\uFFFDright' } })
    expect(j.stats()).toMatchObject({ written: 1, rejected: 0 })
  })
})
