import { describe, expect, it } from 'vitest'
import { createEngine, validateLayout } from '#shared/signalling'
import type { Layout } from '#shared/schemas/layout'
import { carryAreas, carryState } from '../../../server/live/layout-reload'
import { lineLayout } from '../../support/layout-fixtures'

const checked = (def: unknown): Layout => {
  const r = validateLayout(def)
  if (!r.ok) throw new Error(JSON.stringify(r.errors))
  return r.layout
}

describe('carryState (a layout reloaded at a new version)', () => {
  it('keeps occupancy, descriptions and overrides of what the new version still has; new items start clear', () => {
    const old = checked(lineLayout('Hollin bank'))
    const engine = createEngine(old)
    engine.apply({ type: 'detector', detector: 'D2', occupied: true, at: 1000 })
    engine.apply({ type: 'interpose', block: 'B2', description: '1H07', at: 1100 })
    engine.apply({ type: 'override', signal: 'S3', mode: 'hold', at: 1200 })
    const next = structuredClone(lineLayout('Hollin bank'))
    next.blocks.push({ id: 'B5', name: 'Hollin top', lengthMm: 700, detectors: ['D5'] })
    next.links.push({ from: 'B4', to: 'B5' })
    next.signals = next.signals!.filter(s => s.id !== 'S4')
    next.areas![0]!.signals = ['S2', 'S3']
    next.diagram!.width = 1200
    next.diagram!.blocks!.B5 = { path: [[900, 200], [1090, 200]] }
    delete next.diagram!.signals!.S4
    const layout = checked(next)
    const state = carryState(engine.state(), layout)
    expect(state.occupied).toMatchObject({ B2: true, B5: false })
    expect(state.overrides.S3).toBe('hold')
    expect(state.overrides).not.toHaveProperty('S4')
    expect(state.descriptions.B2).toBe('1H07')
    // the engine runs on it: S2 protects the occupied B2, so it shows danger
    expect(createEngine(layout, state).indications().S2!.aspect).toBe('danger')
  })

  it('keeps the holders of areas that still exist', () => {
    const layout = checked(lineLayout('Hollin bank'))
    const holder = { id: 7, name: 'Tam Oakridge', role: 'signaller' as const }
    expect(carryAreas({ hollin: holder, gone: holder }, layout)).toEqual({ hollin: holder })
  })
})
