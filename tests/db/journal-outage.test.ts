// PostgreSQL stopped and started again under the journal, on a cluster of this file's own: the live panel
// keeps appending, and when the database is back the journal is complete, in order, without duplicates.
import { readdirSync, readFileSync } from 'node:fs'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Database } from '../../server/database/connection'
import { createJournal, type Journal, type JournalOptions, type JournalStats } from '../../server/live/journal'
import { startThrowawayPostgres, type ThrowawayPostgres } from '../support/postgres'
import { freshLayout, numbered, range, removeScratchDirs, scratchDir, sleep, storedRows, waitUntil } from '../support/journal-checks'

let cluster: ThrowawayPostgres
let db: Database

beforeAll(async () => {
  cluster = await startThrowawayPostgres()
  db = await cluster.openMigrated()
})
afterAll(async () => {
  await db?.sequelize.close()
  await cluster?.destroy()
  removeScratchDirs()
})

function journal(options: Partial<JournalOptions> = {}): Journal {
  return createJournal({ sequelize: db.sequelize, spillDir: scratchDir('journal-spill'), retryMs: 250, log: () => {}, ...options })
}

/** Appends numbered entries at a steady rate, catching up after late timer ticks. */
function steadyRun(j: Journal, layoutId: number, perSecond: number) {
  const started = Date.now()
  let count = 0
  const tick = setInterval(() => {
    const due = Math.floor((Date.now() - started) * perSecond / 1000)
    while (count < due) j.append(numbered(layoutId, count++))
  }, 10)
  return { stop: () => { clearInterval(tick); return count } }
}

/** Samples the journal's figures every 50 ms, to see what happened during the outage. */
function watch(j: Journal) {
  const seen = { maxSpilled: 0, maxQueued: 0, sawDatabaseDown: false }
  const tick = setInterval(() => {
    const s: JournalStats = j.stats()
    seen.maxSpilled = Math.max(seen.maxSpilled, s.spilled)
    seen.maxQueued = Math.max(seen.maxQueued, s.queued)
    seen.sawDatabaseDown ||= !s.databaseUp
  }, 50)
  return { seen, stop: () => clearInterval(tick) }
}

const spillFiles = (dir: string) => readdirSync(dir).filter(name => name.endsWith('.jsonl'))

async function outage(ms: number, during?: () => void | Promise<void>) {
  await cluster.stop()
  try {
    await sleep(ms)
    await during?.()
  } finally {
    await cluster.start()
  }
}

describe('event journal: PostgreSQL stopped during a steady run', () => {
  it('a 5 s outage: entries wait in memory and are all written, in order, once, when it is back', async () => {
    const layoutId = await freshLayout(db)
    const j = journal()
    const observed = watch(j)
    const run = steadyRun(j, layoutId, 1000)
    await sleep(1500)
    await outage(5000)
    await sleep(1500)
    const appended = run.stop()
    await waitUntil(() => j.stats().written === appended, 'every entry is written')
    observed.stop()

    const rows = await storedRows(db, layoutId)
    expect(rows.map(r => r.n)).toEqual(range(0, appended))
    expect(observed.seen.sawDatabaseDown).toBe(true)
    expect(observed.seen.maxQueued).toBeGreaterThan(3000) // about 5 s of entries held meanwhile
    expect(observed.seen.maxSpilled).toBe(0) // under the memory limit: nothing went to disk
    expect(j.stats()).toMatchObject({ queued: 0, spilled: 0, databaseUp: true })
    expect(j.stats().writeFailures).toBeGreaterThan(0)
    await j.close()
  }, 40_000)

  it('a longer outage than memory holds: entries spill to the file and the file is written first', async () => {
    const layoutId = await freshLayout(db)
    const spillDir = scratchDir('journal-spill')
    const j = journal({ spillDir, memoryLimit: 1500 })
    const observed = watch(j)
    const run = steadyRun(j, layoutId, 1000)
    await sleep(1000)
    let filesDuringOutage: string[] = []
    await outage(5000, () => { filesDuringOutage = spillFiles(spillDir) })
    await sleep(1500)
    const appended = run.stop()
    await waitUntil(() => j.stats().written === appended, 'every entry is written')
    observed.stop()

    const rows = await storedRows(db, layoutId)
    expect(rows.map(r => r.n)).toEqual(range(0, appended))
    expect(new Set(rows.map(r => r.key)).size).toBe(appended)
    expect(filesDuringOutage).toHaveLength(1)
    expect(observed.seen.maxSpilled).toBeGreaterThan(2000)
    expect(observed.seen.maxQueued).toBeLessThan(1500 + 500) // the memory limit held (plus one spill in flight)
    await waitUntil(() => spillFiles(spillDir).length === 0, 'the spill file is deleted once written')
    await j.close()
  }, 40_000)
})

describe('event journal: while PostgreSQL is down', () => {
  it('append returns at once, flush gives up after one attempt, close keeps the rest for the next start', async () => {
    const layoutId = await freshLayout(db)
    const spillDir = scratchDir('journal-spill')
    const lines: string[] = []
    await cluster.stop()
    try {
      const j = journal({ spillDir, memoryLimit: 1000, log: line => lines.push(line) })
      const returned = range(0, 30_000).map(n => j.append(numbered(layoutId, n)))
      expect(returned.every(r => r === undefined)).toBe(true)
      // Nothing was written to disk inside the loop: spilling happens off the caller's path.
      expect(j.stats()).toMatchObject({ queued: 30_000, spilled: 0 })

      await j.flush()
      expect(j.stats().databaseUp).toBe(false)
      expect(j.stats().lastError).toMatch(/ECONNREFUSED/)
      await waitUntil(() => j.stats().spilled === 30_000 && j.stats().queued === 0, 'everything is in the spill file')

      j.append(numbered(layoutId, 30_000)) // still only in memory when close() is called
      await j.close()
      const [file] = spillFiles(spillDir)
      const kept = readFileSync(join(spillDir, file!), 'utf8').trim().split('\n').map(line => JSON.parse(line).payload.n)
      expect(kept).toEqual(range(0, 30_001))
      expect(lines.join('\n')).toMatch(/closed with 30001 entries not yet stored; they stay in/)
    } finally {
      await cluster.start()
    }

    const next = journal({ spillDir })
    next.append(numbered(layoutId, 30_001))
    await waitUntil(() => next.stats().written === 30_002, 'the kept entries and the new one are written')
    expect((await storedRows(db, layoutId)).map(r => r.n)).toEqual(range(0, 30_002))
    expect(spillFiles(spillDir)).toEqual([])
    await next.close()
  }, 40_000)

  it('entries appended while close() runs, or after it, are kept in order for the next start', async () => {
    const layoutId = await freshLayout(db)
    const spillDir = scratchDir('journal-spill')
    await cluster.stop()
    try {
      const j = journal({ spillDir })
      for (const n of range(0, 10)) j.append(numbered(layoutId, n))
      const closing = j.close()
      for (const n of range(10, 5)) j.append(numbered(layoutId, n)) // a last change racing the shutdown
      await closing
      j.append(numbered(layoutId, 15)) // after close: straight to the file
      const [file] = spillFiles(spillDir)
      const kept = readFileSync(join(spillDir, file!), 'utf8').trim().split('\n').map(line => JSON.parse(line).payload.n)
      expect(kept).toEqual(range(0, 16))
    } finally {
      await cluster.start()
    }
    const next = journal({ spillDir })
    await waitUntil(() => next.stats().written === 16, 'the kept entries are written')
    expect((await storedRows(db, layoutId)).map(r => r.n)).toEqual(range(0, 16))
    await next.close()
  }, 40_000)
})
