// Running time and distance of stock from train-description entries (shared/maintenance/stock.ts).
// Scale ratios: OO 1:76.2 and British N 1:148, docs/sources.md §3.
import { describe, expect, it } from 'vitest'
import { stockDueState, stockRunning, type DescriptionEntry } from '#shared/maintenance/stock'

const LENGTHS = { FY1: 1800, UM1: 2200, UM2: 1500, UM3: 1800 }
const s = (t: number) => t * 1000

// 2H07 enters FY1 (interposed), steps to UM1, UM2, UM3; each berth clears as the tail leaves; UM3's clears at 80 s.
const entries: DescriptionEntry[] = [
  { at: s(2), block: 'FY1', description: '2H07' },
  { at: s(10), block: 'UM1', description: '2H07' },
  { at: s(12), block: 'FY1', description: null },
  { at: s(15), block: 'DM1', description: '1A01' }, // another train: not counted
  { at: s(30), block: 'UM2', description: '2H07' },
  { at: s(32), block: 'UM1', description: null },
  { at: s(50), block: 'UM3', description: '2H07' },
  { at: s(52), block: 'UM2', description: null },
  { at: s(80), block: 'UM3', description: null },
]

describe('stock running from description entries', () => {
  it('adds block lengths per passage, scaled: a worked example in OO (1:76.2) and British N (1:148)', () => {
    // model distance: FY1 1,800 + UM1 2,200 + UM2 1,500 + UM3 1,800 = 7,300 mm = 7.3 m
    // OO: 7.3 m x 76.2 = 556.26 scale metres; British N: 7.3 m x 148 = 1,080.4 scale metres
    // time: held a berth from 2 s (interposed in FY1) until UM3 cleared at 80 s = 78 s
    const oo = stockRunning(entries, '2H07', { from: 0, to: s(3600) }, LENGTHS, 76.2)
    expect(oo.passages).toBe(4)
    expect(oo.scaleMetres).toBeCloseTo(556.26, 6)
    expect(oo.seconds).toBe(78)
    expect(stockRunning(entries, '2H07', { from: 0, to: s(3600) }, LENGTHS, 148).scaleMetres).toBeCloseTo(1080.4, 6)
  })

  it('counts only inside the window the item ran under the description, a train still there until its end', () => {
    // from 40 s: UM3 at 50 s (1,800 mm); UM2's berth (reached at 30 s) is not the item's in this window
    const later = stockRunning(entries, '2H07', { from: s(40), to: s(70) }, LENGTHS, 76.2)
    expect(later).toEqual({ passages: 1, seconds: 20, scaleMetres: 1.8 * 76.2 })
  })

  it('is nothing for a description that never ran', () => {
    expect(stockRunning(entries, '9Z99', { from: 0, to: s(3600) }, LENGTHS, 76.2)).toEqual({ passages: 0, seconds: 0, scaleMetres: 0 })
  })

  it('is due at its service interval and due soon from 80 % of it, by hours or by distance', () => {
    expect(stockDueState({ seconds: 3600 * 10, scaleMetres: 0 }, { hours: 10, km: null })).toMatchObject({ state: 'due', reasons: ['10.0 running hours of 10'] })
    expect(stockDueState({ seconds: 0, scaleMetres: 850_000 }, { hours: null, km: 1000 })).toMatchObject({ state: 'due-soon', reasons: ['850.0 scale km of 1000'] })
    expect(stockDueState({ seconds: 3600, scaleMetres: 1000 }, { hours: 10, km: 1000 }).state).toBe('ok')
    expect(stockDueState({ seconds: 1e9, scaleMetres: 1e9 }, { hours: null, km: null }).state).toBe('ok')
  })
})
