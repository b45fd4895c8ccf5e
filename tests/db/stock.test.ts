// The stock roster's running time and distance, from a journal written by the real LayoutRuntime and journal
// writer for a scripted evening on the demo layout (Wrenfold Junction, an invented scenario).
// Scale ratios: OO 1:76.2 (the demo layout's scale) and British N 1:148, docs/sources.md §3.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import demo from '#shared/layouts/demo-layout.json' with { type: 'json' }
import { validateLayout } from '#shared/signalling'
import { areaOfBlock } from '#shared/live/rights'
import type { Layout } from '#shared/schemas/layout'
import type { Database } from '../../server/database/connection'
import { createJournal, type Journal } from '../../server/live/journal'
import { LayoutRuntime } from '../../server/live/runtime'
import { createStockItem, listStock, listStockServices, recordStockService, setStockDescription } from '../../server/utils/stock'
import { startThrowawayPostgres, type ThrowawayPostgres } from '../support/postgres'
import { removeScratchDirs, scratchDir } from '../support/journal-checks'

let cluster: ThrowawayPostgres
let db: Database
let journal: Journal
let layoutId: number
let userId: number
const checked = validateLayout(demo)
const layout: Layout = checked.ok ? checked.layout : (null as never)
const T0 = Date.UTC(2026, 10, 27, 19, 0, 0)
const at = (s: number) => new Date(T0 + s * 1000)
const detector = (block: string) => layout.blocks.find(b => b.id === block)!.detectors[0]!

beforeAll(async () => {
  cluster = await startThrowawayPostgres()
  db = await cluster.openMigrated()
  journal = createJournal({ sequelize: db.sequelize, spillDir: scratchDir('stock-spill'), log: () => {} })
  layoutId = (await db.models.Layout.create({ slug: 'wrenfold-stock', name: 'Wrenfold Junction', definition: layout as never })).id
  userId = (await db.models.User.create({ email: 'rhea@fernhollow.example', name: 'Rhea Lintwhistle', role: 'signaller', passwordHash: 'x' })).id
})
afterAll(async () => {
  await journal?.close()
  await db?.sequelize.close()
  await cluster?.destroy()
  removeScratchDirs()
})

/** 2H07 is interposed in fiddle road 1 and runs FY1 -> UM1 -> UM2 -> UM3 -> UM4, leaving UM4 for FY1 again. */
async function runEvening(): Promise<void> {
  let now = T0
  const rt = new LayoutRuntime({ layoutId, slug: 'wrenfold-stock', layout, debounceMs: 0, now: () => now, publish: () => {}, journal, broadcast: () => {} })
  const rhea = { id: userId, name: 'Rhea Lintwhistle', role: 'signaller' as const }
  rt.connect(rhea)
  for (const t of layout.turnouts) rt.turnoutReport(t.id, 'normal', now)
  const step = (s: number, block: string, occupied: boolean) => { now = T0 + s * 1000; rt.detectorInput(detector(block), occupied, now) }
  step(1, 'FY1', true)
  now = T0 + 2000
  // as the panel does: a block outside every area is interposed by the holder of the first area
  const area = areaOfBlock(layout, 'FY1')?.id ?? layout.areas[0]!.id
  expect(rt.command(rhea, { action: 'take-area', area })).toMatchObject({ ok: true })
  expect(rt.command(rhea, { action: 'interpose', block: 'FY1', description: '2H07' })).toMatchObject({ ok: true })
  const moves: [number, string, boolean][] = [
    [10, 'UM1', true], [12, 'FY1', false], [30, 'UM2', true], [32, 'UM1', false],
    [50, 'UM3', true], [52, 'UM2', false], [70, 'UM4', true], [72, 'UM3', false], [100, 'UM4', false],
  ]
  for (const [s, block, occupied] of moves) step(s, block, occupied)
  rt.stop()
  await journal.flush()
}

describe('stock roster running', () => {
  it('adds up block lengths x passages, scaled, and the time under the description, from the journal', async () => {
    const loco = await createStockItem(db.sequelize, layoutId, { name: 'Class 20 Bo-Bo', number: '20 042', serviceHours: 10, serviceKm: 5 })
    const coach = await createStockItem(db.sequelize, layoutId, { name: 'Brake coach', serviceHours: null, serviceKm: null })
    await setStockDescription(db.sequelize, loco, '2H07', at(0))
    await setStockDescription(db.sequelize, coach, '2H07', at(40)) // joined the train later: only UM3 and UM4 count
    await runEvening()
    const items = await listStock(db.sequelize, layoutId, layout, at(3600))
    const l = items.find(i => i.id === loco)!
    // worked example: passages FY1 (interposed) 1,800 + UM1 2,200 + UM2 1,500 + UM3 1,800 + UM4 2,400 = 9,700 mm
    // on the model = 9.7 m; in OO (1:76.2) 9.7 x 76.2 = 739.14 scale metres
    expect(l.passages).toBe(5)
    expect(l.scaleMetres).toBeCloseTo(739.14, 6)
    // time: from the interpose at 2 s until UM4 cleared at 100 s = 98 s
    expect(l.seconds).toBe(98)
    expect(l).toMatchObject({ description: '2H07', state: 'ok', number: '20 042' })
    // the coach from 40 s: UM3 1,800 + UM4 2,400 = 4,200 mm x 76.2 = 320.04 scale metres; 50 s to 100 s = 50 s
    const c = items.find(i => i.id === coach)!
    expect(c).toMatchObject({ passages: 2, seconds: 50 })
    expect(c.scaleMetres).toBeCloseTo(320.04, 6)
    // the same journal on a layout in British N (1:148): 9.7 m x 148 = 1,435.6 scale metres
    const n = await listStock(db.sequelize, layoutId, { ...layout, scale: { name: 'N', ratio: 148 } }, at(3600))
    expect(n.find(i => i.id === loco)!.scaleMetres).toBeCloseTo(1435.6, 6)
  })

  it('is due at its service interval, and starts again from a service, which the log keeps', async () => {
    const [item] = await db.sequelize.query<{ id: number }>(`SELECT id FROM stock_items WHERE name = 'Class 20 Bo-Bo'`, { type: 'SELECT' as never })
    await db.sequelize.query('UPDATE stock_items SET service_km = 0.7 WHERE id = :id', { replacements: { id: item!.id } })
    let l = (await listStock(db.sequelize, layoutId, layout, at(3600))).find(i => i.id === item!.id)!
    expect(l).toMatchObject({ state: 'due', reasons: ['0.7 scale km of 0.7'] })
    await recordStockService(db.sequelize, item!.id, 'wheels cleaned, motor oiled', userId, at(200))
    l = (await listStock(db.sequelize, layoutId, layout, at(3600))).find(i => i.id === item!.id)!
    expect(l).toMatchObject({ passages: 0, seconds: 0, scaleMetres: 0, state: 'ok', lastServicedAt: at(200).toISOString() })
    expect(await listStockServices(db.sequelize, item!.id)).toMatchObject([{ by: 'Rhea Lintwhistle', note: 'wheels cleaned, motor oiled' }])
  })

  it('ends the run under a description when it is changed or taken away', async () => {
    const [item] = await db.sequelize.query<{ id: number }>(`SELECT id FROM stock_items WHERE name = 'Brake coach'`, { type: 'SELECT' as never })
    await setStockDescription(db.sequelize, item!.id, null, at(60))
    const c = (await listStock(db.sequelize, layoutId, layout, at(3600))).find(i => i.id === item!.id)!
    // 40 s to 60 s: UM3 only (1,800 mm x 76.2 = 137.16 scale metres), held from 50 s to 60 s
    expect(c).toMatchObject({ description: null, passages: 1, seconds: 10 })
    expect(c.scaleMetres).toBeCloseTo(137.16, 6)
  })
})
