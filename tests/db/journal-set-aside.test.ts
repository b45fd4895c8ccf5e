// One entry the database can never take must not stop the journal: it is set aside with its reason (in a
// file that outlives restarts), counted, and the entries behind it are stored. A journal whose writes keep
// failing says since when.
import { writeFileSync } from 'node:fs'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { QueryTypes } from 'sequelize'
import type { Database } from '../../server/database/connection'
import { createJournal, type Journal, type JournalOptions } from '../../server/live/journal'
import { journalEntryKey, newJournalBootId, prepareJournalEntry, toJournalSpillLine } from '../../server/live/journal-entry'
import { connectWithoutModels, freePort, startThrowawayPostgres, type ThrowawayPostgres } from '../support/postgres'
import { freshLayout, numbered, range, removeScratchDirs, scratchDir, storedRows, waitUntil } from '../support/journal-checks'

let cluster: ThrowawayPostgres
let db: Database
const journals: Journal[] = []

function journal(options: Partial<JournalOptions> & { spillDir: string }): Journal {
  const j = createJournal({ sequelize: db.sequelize, log: () => {}, ...options })
  journals.push(j)
  return j
}

// 8.7e15 ms is past the largest JavaScript date (8.64e15 ms, ECMA-262 §21.4.1.1 "Time Values and Time Range").
const BEYOND_DATES = 8_700_000_000_000_000

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

describe('journal: entries that cannot be stored', () => {
  it('stores an appended entry whose time is beyond any date, at its append time, and the entries behind it', async () => {
    const layoutId = await freshLayout(db)
    const lines: string[] = []
    const j = journal({ spillDir: scratchDir('journal-spill'), log: line => lines.push(line) })
    const before = Date.now()
    for (const n of range(0, 5)) j.append(n === 2 ? numbered(layoutId, n, BEYOND_DATES) : numbered(layoutId, n))
    await j.flush()
    expect((await storedRows(db, layoutId)).map(r => r.n)).toEqual([0, 1, 2, 3, 4])
    const [row] = await db.sequelize.query<{ at: Date }>(`SELECT at FROM events WHERE layout_id = ${layoutId} AND (payload->>'n')::int = 2`, { type: QueryTypes.SELECT })
    expect(row!.at.getTime()).toBeGreaterThanOrEqual(before - 1)
    expect(lines.join('\n')).toMatch(/outside the years 1 to 9999; the append time is used/)
  })

  it('sets aside a spilled entry from an earlier run that cannot be stored, stores the rest, and still counts it after a restart', async () => {
    const layoutId = await freshLayout(db)
    const spillDir = scratchDir('journal-spill')
    const bootId = newJournalBootId(Date.now() - 60_000)
    const records = range(0, 6).map(n => prepareJournalEntry(numbered(layoutId, n), n + 1, journalEntryKey(bootId, n + 1)).stored)
    records[3] = { ...records[3]!, at: BEYOND_DATES } // as an older version wrote it
    writeFileSync(join(spillDir, `journal-${bootId}.jsonl`), records.map(toJournalSpillLine).join(''))

    const first = journal({ spillDir })
    await first.flush()
    expect((await storedRows(db, layoutId)).map(r => r.n)).toEqual([0, 1, 2, 4, 5])
    expect(first.stats()).toMatchObject({ setAside: 1, rejected: 1, spilled: 0, failingSince: null })
    const [aside] = await first.setAsideEntries(10)
    expect(aside).toMatchObject({ key: records[3]!.key, layoutId, at: BEYOND_DATES, type: 'detector', payload: { n: 3 } })
    expect(aside!.reason).toMatch(/outside the years 1 to 9999/)
    await first.close()

    const second = journal({ spillDir })
    await second.flush()
    expect(second.stats().setAside).toBe(1)
    expect((await second.setAsideEntries(10)).map(e => e.key)).toEqual([records[3]!.key])
  })

  it('says since when writes have failed while the database cannot be reached', async () => {
    const port = await freePort()
    const unreachable = connectWithoutModels({ ...cluster.settings, port })
    try {
      const j = journal({ spillDir: scratchDir('journal-spill'), sequelize: unreachable, retryMs: 50 })
      const before = Date.now()
      j.append(numbered(1, 0))
      await j.flush()
      await waitUntil(() => j.stats().writeFailures >= 2, 'two failed writes')
      expect(j.stats().failingSince).toBeGreaterThanOrEqual(before)
      expect(j.stats().databaseUp).toBe(false)
    } finally {
      await unreachable.close()
    }
  })
})
