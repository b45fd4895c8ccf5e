// One owner per layout among several processes: the advisory lock, the epoch bumped on each takeover, and
// journal rows of a former owner refused by the database (PostgreSQL 15 docs §9.27.10 "Advisory Lock
// Functions": a session-level lock is held until released or the session ends).
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { QueryTypes } from 'sequelize'
import type { Database } from '../../server/database/connection'
import { LayoutOwnership } from '../../server/live/ownership'
import { journalEntryKey, newJournalBootId, prepareJournalEntry } from '../../server/live/journal-entry'
import { writeJournalBatch } from '../../server/live/journal-insert'
import { startThrowawayPostgres, type ThrowawayPostgres } from '../support/postgres'
import { freshLayout, waitUntil } from '../support/journal-checks'

let cluster: ThrowawayPostgres
let db: Database
const ownerships: LayoutOwnership[] = []

beforeAll(async () => {
  cluster = await startThrowawayPostgres()
  db = await cluster.openMigrated()
})
afterAll(async () => {
  for (const o of ownerships) await o.stop()
  await db?.sequelize.close()
  await cluster?.destroy()
})

function ownership(instance: string, layoutId: number) {
  const events: string[] = []
  const o = new LayoutOwnership(cluster.settings, instance, {
    acquired: (id, epoch) => { events.push(`acquired ${id} ${epoch}`) },
    lost: (id, reason) => { events.push(`lost ${id}: ${reason}`) },
  }, () => {})
  o.want([layoutId])
  ownerships.push(o)
  return { o, events }
}

const bootId = newJournalBootId()
let seq = 0
function row(layoutId: number, epoch: number | null) {
  seq++
  return prepareJournalEntry({ layoutId, sessionId: null, at: Date.now(), type: 'detector-input', subject: 'D01', payload: { n: seq }, userId: null, epoch }, seq, journalEntryKey(bootId, seq)).stored
}
const storedEpochs = async (layoutId: number) => (await db.sequelize.query<{ owner_epoch: string | null }>(
  'SELECT owner_epoch FROM events WHERE layout_id = :layoutId ORDER BY id', { replacements: { layoutId }, type: QueryTypes.SELECT })).map(r => r.owner_epoch === null ? null : Number(r.owner_epoch))

describe('layout ownership', () => {
  it('gives a layout to one process at a time and bumps the epoch on each takeover', async () => {
    const layoutId = await freshLayout(db, 'Ownership Sidings')
    const a = ownership('hall-a', layoutId)
    const b = ownership('hall-b', layoutId)
    await a.o.tick()
    await b.o.tick()
    expect(a.events).toEqual([`acquired ${layoutId} 1`])
    expect(b.events).toEqual([])
    expect([...b.o.ownedLayouts().keys()]).toEqual([])

    // The owner's connection ends (as when the process dies): PostgreSQL drops the lock, the other takes it.
    await db.sequelize.query(`SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE application_name = 'blockbell-owner-hall-a'`)
    await waitUntil(() => a.events.length === 2, 'the owner noticing its lost connection', 5000)
    expect(a.events[1]).toMatch(new RegExp(`^lost ${layoutId}: lock connection`))
    await b.o.tick()
    expect(b.events).toEqual([`acquired ${layoutId} 2`])
    // The former owner reconnects but cannot take it back while the new one holds it.
    await a.o.tick()
    expect(a.events.length).toBe(2)
    expect([...a.o.ownedLayouts()]).toEqual([])
  })

  it('refuses journal rows of an epoch that is no longer current, and never fences a process running alone', async () => {
    const layoutId = await freshLayout(db, 'Fencing Loop')
    await db.sequelize.query('INSERT INTO layout_owners (layout_id, epoch, instance) VALUES (:layoutId, 7, :i)', { replacements: { layoutId, i: 'hall-a' } })
    const result = await writeJournalBatch(db.sequelize, [row(layoutId, 7), row(layoutId, 6), row(layoutId, null), row(layoutId, 8)])
    expect(result.inserted).toBe(2)
    expect(await storedEpochs(layoutId)).toEqual([7, null])
    // A layout nobody ever owned: rows with an epoch are refused, rows without one are stored.
    const alone = await freshLayout(db, 'Lonely Halt')
    await writeJournalBatch(db.sequelize, [row(alone, 1), row(alone, null)])
    expect(await storedEpochs(alone)).toEqual([null])
  })

  it('a takeover waits for a write in progress; a write after it is refused', async () => {
    const layoutId = await freshLayout(db, 'Waiting Yard')
    await db.sequelize.query('INSERT INTO layout_owners (layout_id, epoch, instance) VALUES (:layoutId, 1, :i)', { replacements: { layoutId, i: 'hall-a' } })
    const t = await db.sequelize.transaction()
    await writeJournalBatch(db.sequelize, [row(layoutId, 1)]).then(() => {}) // committed before
    const inFlight = row(layoutId, 1)
    await db.sequelize.query(`
      WITH owners AS (SELECT layout_id, epoch FROM layout_owners WHERE layout_id = :layoutId FOR SHARE)
      INSERT INTO events (layout_id, at, type, subject, payload, entry_key, owner_epoch)
      SELECT :layoutId, now(), 'detector-input', 'D01', '{}', :key, 1 FROM owners WHERE epoch = 1`, { replacements: { layoutId, key: inFlight.key }, transaction: t })
    let bumped = false
    const bump = db.sequelize.query('UPDATE layout_owners SET epoch = epoch + 1 WHERE layout_id = :layoutId', { replacements: { layoutId } }).then(() => { bumped = true })
    await new Promise(resolve => setTimeout(resolve, 300))
    expect(bumped).toBe(false)
    await t.commit()
    await bump
    await writeJournalBatch(db.sequelize, [row(layoutId, 1), row(layoutId, 2)])
    expect(await storedEpochs(layoutId)).toEqual([1, 1, 2])
  })
})
