import { describe, expect, it } from 'vitest'
import { describeChanges, summarizeChanges } from '#shared/layouts/changes'
import { lineLayout } from '../../support/layout-fixtures'

// Worked examples made by hand on a four-block line (tests/support/layout-fixtures.ts).
describe('summarizeChanges', () => {
  it('counts what was added, removed and changed by kind, matching items by id', () => {
    const before = lineLayout('Hollin bank')
    const after = structuredClone(before)
    after.blocks.push({ id: 'B5', name: 'Hollin top', lengthMm: 700, detectors: ['D5'] })
    after.links.push({ from: 'B4', to: 'B5' })
    after.signals = after.signals!.filter(s => s.id !== 'S4')
    after.diagram!.signals!.S2!.at = [300, 230]
    after.areas![0]!.signals = ['S2', 'S3']
    const summary = summarizeChanges(before, after)
    expect(summary).toEqual({ added: { blocks: 1, links: 1 }, removed: { signals: 1 }, changed: { signals: 1, areas: 1 } })
    expect(describeChanges(summary)).toBe('1 block, 1 link added; 1 signal removed; 1 signal, 1 area changed')
  })

  it('sees no change when only the order of keys differs (as PostgreSQL JSONB stores them)', () => {
    const before = lineLayout('Hollin bank')
    const reordered = JSON.parse(JSON.stringify(before, (_k, v) => v && typeof v === 'object' && !Array.isArray(v) ? Object.fromEntries(Object.entries(v).reverse()) : v))
    expect(describeChanges(summarizeChanges(before, reordered))).toBe('no changes')
  })

  it('counts everything as added for a first version', () => {
    expect(summarizeChanges(null, lineLayout('Hollin bank'))).toEqual({ added: { blocks: 4, links: 3, signals: 3, areas: 1, labels: 1 }, removed: {}, changed: {} })
  })
})
