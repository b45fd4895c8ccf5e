// Track cleaning counters, counted in PostgreSQL from a journal written by the real LayoutRuntime and journal
// writer for a scripted run of two trains over the demo layout (Wrenfold Junction, an invented scenario).
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import demo from '#shared/layouts/demo-layout.json' with { type: 'json' }
import { validateLayout } from '#shared/signalling'
import type { Layout } from '#shared/schemas/layout'
import type { Database } from '../../server/database/connection'
import { createJournal, type Journal } from '../../server/live/journal'
import { LayoutRuntime } from '../../server/live/runtime'
import { insertJournalRecords } from '../../server/live/journal-insert'
import { blockUse, blockUseFromJournal, layoutMaintenance, listCleanings, recordCleaning, setCleaningThresholds } from '../../server/utils/maintenance'
import { startThrowawayPostgres, type ThrowawayPostgres } from '../support/postgres'
import { removeScratchDirs, scratchDir } from '../support/journal-checks'

let cluster: ThrowawayPostgres
let db: Database
let journal: Journal
let layoutId: number
let userId: number
const checked = validateLayout(demo)
const layout: Layout = checked.ok ? checked.layout : (null as never)
const T0 = Date.UTC(2026, 10, 20, 19, 0, 0) // an evening's running session
const detector = (block: string) => layout.blocks.find(b => b.id === block)!.detectors[0]!

beforeAll(async () => {
  cluster = await startThrowawayPostgres()
  db = await cluster.openMigrated()
  journal = createJournal({ sequelize: db.sequelize, spillDir: scratchDir('maintenance-spill'), log: () => {} })
  const row = await db.models.Layout.create({ slug: 'wrenfold-maintenance', name: 'Wrenfold Junction', definition: layout as never })
  layoutId = row.id
  const user = await db.models.User.create({ email: 'tam@fernhollow.example', name: 'Tam Oakridge', role: 'signaller', passwordHash: 'x' })
  userId = user.id
})
afterAll(async () => {
  await journal?.close()
  await db?.sequelize.close()
  await cluster?.destroy()
  removeScratchDirs()
})

/** Two trains on the up main: the script's times are what the counters must add up to. */
async function runScript(): Promise<void> {
  let now = T0
  const rt = new LayoutRuntime({
    layoutId, slug: 'wrenfold-maintenance', layout, debounceMs: 40, now: () => now,
    publish: () => {}, journal, broadcast: () => {},
  })
  const at = (s: number) => { now = T0 + s * 1000; return now }
  const steps: [number, string, boolean][] = [
    [0, 'UM1', true], [10, 'UM2', true], [12, 'UM1', false], [20, 'UM3', true], [22, 'UM2', false], [30, 'UM3', false],
    [100, 'UM1', true], [130, 'UM1', false],
  ]
  for (const [s, block, occupied] of steps) {
    rt.detectorInput(detector(block), occupied, at(s))
    // a clear is held for the debounce time before it counts; wait it out so it is passed on
    if (!occupied) await new Promise(resolve => setTimeout(resolve, 60))
  }
  // a dropout on UM2: the second train's wheels lose the rail for a moment (clear, occupied again within 40 ms)
  rt.detectorInput(detector('UM2'), true, at(140))
  rt.detectorInput(detector('UM2'), false, at(141))
  rt.detectorInput(detector('UM2'), true, at(141))
  rt.detectorInput(detector('UM2'), false, at(150))
  await new Promise(resolve => setTimeout(resolve, 60))
  rt.stop()
  await journal.flush()
}

describe('track cleaning counters', () => {
  it('count passages, occupied time and dropouts per block from the journal, as the script ran them', async () => {
    await runScript()
    const use = await blockUse(db.sequelize, layoutId, new Date(T0 + 3600_000))
    // UM1: two trains, occupied 0-12 s and 100-130 s -> 2 passages, 12 + 30 = 42 s
    expect(use.get('UM1')).toMatchObject({ passages: 2, occupiedSeconds: 42, dropouts: 0, lastCleanedAt: null })
    // UM2: 10-22 s and 140-150 s (the dropout at 141 s is not a new passage) -> 2 passages, 12 + 10 = 22 s, 1 dropout
    expect(use.get('UM2')).toMatchObject({ passages: 2, occupiedSeconds: 22, dropouts: 1 })
    // UM3: 20-30 s
    expect(use.get('UM3')).toMatchObject({ passages: 1, occupiedSeconds: 10, dropouts: 0 })
    expect(use.has('DM1')).toBe(false)
    // the running tallies say exactly what a count of the journal itself says
    expect(use).toEqual(await blockUseFromJournal(db.sequelize, layoutId, new Date(T0 + 3600_000)))
  })

  it('start again from zero for the blocks a cleaning covered, and keep each block\'s history', async () => {
    await recordCleaning(db.sequelize, layoutId, layout, { blocks: ['UM1', 'UM2'], method: 'dry brush', notes: 'after the evening' }, userId, T0 + 200_000)
    const use = await blockUse(db.sequelize, layoutId, new Date(T0 + 3600_000))
    expect(use.get('UM1')).toMatchObject({ passages: 0, occupiedSeconds: 0, dropouts: 0 })
    expect(use.get('UM1')!.lastCleanedAt?.getTime()).toBe(T0 + 200_000)
    expect(use.get('UM2')).toMatchObject({ passages: 0, dropouts: 0 })
    expect(use.get('UM3')).toMatchObject({ passages: 1, occupiedSeconds: 10 })
    const history = await listCleanings(db.sequelize, layoutId)
    expect(history[0]).toMatchObject({ blocks: ['UM1', 'UM2'], method: 'dry brush', notes: 'after the evening', by: 'Tam Oakridge' })
  })

  it('gives each block its due state from the layout\'s thresholds, most due first', async () => {
    await setCleaningThresholds(db.sequelize, layoutId, { passages: 1, occupiedHours: null, dropouts: null, days: null })
    const { blocks } = await layoutMaintenance(db.sequelize, layoutId, layout, new Date(T0 + 3600_000))
    expect(blocks[0]).toMatchObject({ block: 'UM3', state: 'due', passages: 1 })
    expect(blocks.find(b => b.block === 'UM1')).toMatchObject({ state: 'ok', passages: 0 })
    expect(blocks).toHaveLength(layout.blocks.length)
  })

  it('counts a train standing in a block at its cleaning from the cleaning, and one still there until now', async () => {
    let now = T0 + 400_000
    const rt = new LayoutRuntime({ layoutId, slug: 'wrenfold-maintenance', layout, debounceMs: 0, now: () => now, publish: () => {}, journal, broadcast: () => {} })
    rt.detectorInput(detector('UM4'), true, now) // a train stands in UM4 ...
    await journal.flush()
    await recordCleaning(db.sequelize, layoutId, layout, { blocks: ['UM4'], method: 'wipe' }, userId, T0 + 410_000) // ... cleaned around it at 410 s
    now = T0 + 430_000
    rt.detectorInput(detector('UM4'), false, now) // leaves at 430 s: 20 s since the cleaning, no new passage
    now = T0 + 500_000
    rt.detectorInput(detector('DM1'), true, now) // arrives at 500 s and is still there
    rt.stop()
    await journal.flush()
    const use = await blockUse(db.sequelize, layoutId, new Date(T0 + 600_000))
    expect(use.get('UM4')).toMatchObject({ passages: 0, occupiedSeconds: 20 })
    expect(use.get('DM1')).toMatchObject({ passages: 1, occupiedSeconds: 100 })
    expect(use).toEqual(await blockUseFromJournal(db.sequelize, layoutId, new Date(T0 + 600_000)))
  })

  it('refuses a cleaning of a block the layout does not have, or in the future', async () => {
    await expect(recordCleaning(db.sequelize, layoutId, layout, { blocks: ['ZZ9'], method: 'vacuum' }, userId)).rejects.toMatchObject({ statusCode: 400, message: expect.stringMatching(/^blocks: no block "ZZ9"/) })
    await expect(recordCleaning(db.sequelize, layoutId, layout, { blocks: ['UM1'], method: 'vacuum', at: Date.now() + 86_400_000 }, userId)).rejects.toMatchObject({ statusCode: 400 })
  })

  it('keep the running tallies equal to the journal through late rows, a cleaning recorded afterwards and a deleted session log', async () => {
    const other = await db.models.Layout.create({ slug: 'wrenfold-tally', name: 'Wrenfold tally', definition: layout as never })
    const session = await db.models.OperatingSession.create({ layoutId: other.id, name: 'Thursday running', startedAt: new Date(T0), endedAt: new Date(T0 + 7200_000) } as never)
    // a pseudo-random evening over four blocks in batches of 50, rows not in time order, some of a session
    let seed = 7
    const rand = () => { seed = (seed * 1103515245 + 12345) % 2147483648; return seed / 2147483648 }
    const occupied = new Map<string, boolean>()
    const rows = Array.from({ length: 600 }, (_, i) => {
      const block = ['UM1', 'UM2', 'UM3', 'DM1'][Math.floor(rand() * 4)]!
      const dropout = rand() < 0.05
      const next = !occupied.get(block)
      if (!dropout) occupied.set(block, next)
      return {
        layoutId: other.id, sessionId: i % 3 === 0 ? session.id : null, at: T0 + i * 5_000 + Math.floor(rand() * 3_000),
        type: dropout ? 'dropout' : 'block', subject: block, userId: null, epoch: null, key: `tally-${i}`,
        payloadJson: JSON.stringify(dropout ? { type: 'dropout' } : { type: 'block', occupied: next }),
      }
    })
    const now = new Date(T0 + 4 * 3600_000)
    const compare = async () => expect(await blockUse(db.sequelize, other.id, now)).toEqual(await blockUseFromJournal(db.sequelize, other.id, now))
    for (let i = 0; i < 400; i += 50) await insertJournalRecords(db.sequelize, rows.slice(i, i + 50) as never)
    await compare()
    // a cleaning recorded after the fact, at a time in the middle of rows already counted
    await recordCleaning(db.sequelize, other.id, layout, { blocks: ['UM1', 'UM2'], method: 'vacuum' }, userId, T0 + 1000_000)
    await compare()
    // rows arriving late, some from before that cleaning (they must not count for UM1/UM2)
    await insertJournalRecords(db.sequelize, rows.slice(400).reverse() as never)
    await insertJournalRecords(db.sequelize, rows.slice(0, 50) as never) // written twice: skipped by the entry key
    await compare()
    await db.sequelize.query('DELETE FROM events WHERE session_id = :id', { replacements: { id: session.id } })
    await compare()
    const use = await blockUse(db.sequelize, other.id, now)
    expect(use.get('UM3')!.passages).toBeGreaterThan(0)
    expect(use.get('UM1')!.lastCleanedAt?.getTime()).toBe(T0 + 1000_000)
  })
})
