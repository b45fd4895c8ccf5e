// The demo layout (Wrenfold Junction, an invented scenario): it validates, draws completely, and a scripted
// run of one train through it gives the expected indications at each step.
import { describe, expect, it } from 'vitest'
import demo from '#shared/layouts/demo-layout.json'
import { applyEvent, createEngine, initialState, validateLayout } from '#shared/signalling'
import type { Change, Indication, Layout, LayoutEvent, LayoutState } from '#shared/signalling'
import type { Point } from '#shared/schemas/layout'
import { LETTER, ind } from './build'

function demoLayout(): Layout {
  const r = validateLayout(demo)
  if (!r.ok) throw new Error(JSON.stringify(r.errors))
  return r.layout
}

describe('demo layout', () => {
  it('validates', () => {
    const r = validateLayout(demo)
    expect(r.ok ? [] : r.errors).toEqual([])
  })

  it('is an OO layout of 16 blocks, 13 signals and 7 turnouts in two areas of control', () => {
    const l = demoLayout()
    expect(l.scale).toEqual({ name: 'OO', ratio: 76.2 })
    expect(l.blocks).toHaveLength(16)
    expect(l.signals).toHaveLength(13)
    expect(l.turnouts).toHaveLength(7)
    expect(l.areas.map(a => a.name)).toEqual(['Main line', 'Branch & station'])
    for (const b of l.blocks) {
      expect(b.lengthMm).toBeGreaterThanOrEqual(900)
      expect(b.lengthMm).toBeLessThanOrEqual(2400)
      for (const d of b.detectors) expect(d).toMatch(/^D\d\d$/)
    }
  })

  it('puts every signal and turnout in exactly one area', () => {
    const l = demoLayout()
    const signals = l.areas.flatMap(a => a.signals).sort()
    const turnouts = l.areas.flatMap(a => a.turnouts).sort()
    expect(signals).toEqual(l.signals.map(s => s.id).sort())
    expect(turnouts).toEqual(l.turnouts.map(t => t.id).sort())
  })

  it('has drawing data for every block, signal and turnout, inside the drawing', () => {
    const l = demoLayout()
    const d = l.diagram
    expect(Object.keys(d.blocks).sort()).toEqual(l.blocks.map(b => b.id).sort())
    expect(Object.keys(d.signals).sort()).toEqual(l.signals.map(s => s.id).sort())
    expect(Object.keys(d.turnouts).sort()).toEqual(l.turnouts.map(t => t.id).sort())
    expect([d.width, d.height]).toEqual([1280, 800])
    for (const b of Object.values(d.blocks)) expect(b.label).toBeDefined()
  })

  it('draws linked blocks touching each other and each turnout on its block', () => {
    const l = demoLayout()
    const d = l.diagram
    const onSegment = (p: Point, a: Point, b: Point) => {
      const [x, y] = p
      const cross = (b[0] - a[0]) * (y - a[1]) - (b[1] - a[1]) * (x - a[0])
      const within = Math.min(a[0], b[0]) - 0.5 <= x && x <= Math.max(a[0], b[0]) + 0.5 && Math.min(a[1], b[1]) - 0.5 <= y && y <= Math.max(a[1], b[1]) + 0.5
      return Math.abs(cross) < 1e-6 * (1 + Math.hypot(b[0] - a[0], b[1] - a[1])) && within
    }
    const onPath = (p: Point, path: Point[]) => path.some((a, i) => i > 0 && onSegment(p, path[i - 1]!, a))
    const ends = (path: Point[]) => [path[0]!, path[path.length - 1]!]
    for (const link of l.links) {
      const a = d.blocks[link.from]!.path
      const b = d.blocks[link.to]!.path
      const touch = ends(a).some(p => onPath(p, b)) || ends(b).some(p => onPath(p, a))
      expect(touch, `${link.from} -> ${link.to}`).toBe(true)
    }
    for (const t of l.turnouts) expect(onPath(d.turnouts[t.id]!.at, d.blocks[t.block]!.path), t.id).toBe(true)
  })
})

const DETECTOR: Record<string, string> = Object.fromEntries(
  (demo.blocks as { id: string, detectors: string[] }[]).map(b => [b.id, b.detectors[0]!]),
)
const at = (s: number) => 1_750_000_000_000 + s * 1000
const on = (block: string, s: number): LayoutEvent => ({ type: 'detector', detector: DETECTOR[block]!, occupied: true, at: at(s) })
const off = (block: string, s: number): LayoutEvent => ({ type: 'detector', detector: DETECTOR[block]!, occupied: false, at: at(s) })
const turn = (turnout: string, position: 'normal' | 'reverse', s: number): LayoutEvent => ({ type: 'turnout', turnout, position, at: at(s) })

const show = (i: Indication) => LETTER[i.aspect] + (i.indicator ? `(${i.indicator})` : '')
const indicationChanges = (changes: Change[]) =>
  changes.flatMap(c => (c.type === 'indication' ? [`${c.signal} ${show(c.indication)}`] : []))

describe('one train through the demo layout', () => {
  // Train 2C05 leaves fiddle road 3, runs the down main to Wrenfold Junction, takes the branch to
  // Carrowmere, reverses, and returns over the branch up connection to the up main and into fiddle road 1.
  // Expected indications follow the aspect rules: the main signals are four-aspect, the fiddle road exits
  // two-aspect, the branch signals three-aspect, Carrowmere home reads the buffer stop as danger ahead.
  const setup: LayoutEvent[] = [
    turn('T1', 'reverse', 0),
    turn('T2', 'normal', 0),
    turn('T3', 'normal', 0),
    turn('T4', 'normal', 0),
    turn('T5', 'normal', 0),
    turn('T6', 'normal', 0),
    turn('T7', 'normal', 0),
  ]
  const afterSetup
    = 'SU1 G, SU2 G, SU3 G, SD1 YY(1), SD2 G, SD3 G, SF1 G, SF2 R, SF3 G, SF4 R, SB1 Y, SB2 R, SB3 R'

  const steps: [string, LayoutEvent, string[]][] = [
    ['train stands in fiddle road 3: in the down starter section', on('FY3', 10), ['SD2 Y', 'SD3 R']],
    ['described as 2C05', { type: 'interpose', block: 'FY3', description: '2C05', at: at(11), by: 'demo' }, []],
    ['leaves fiddle road 3 past its exit signal', on('DM1', 20), ['SF3 R']],
    ['clears fiddle road 3', off('FY3', 22), ['SD2 YY', 'SD3 Y']],
    ['passes the junction home, set for the branch', on('DM2', 40), ['SD1 R']],
    ['clears the down approach', off('DM1', 43), ['SD2 G', 'SD3 G', 'SF3 G']],
    ['takes the branch down connection', on('JD', 50), []],
    ['clears the junction block', off('DM2', 52), []],
    ['runs onto the branch', on('BR', 60), []],
    ['clears the down connection', off('JD', 62), []],
    ['passes Carrowmere home into the platform', on('CP', 80), ['SB1 R']],
    ['clears the branch: junction home shows caution with its indicator', off('BR', 85), ['SD1 Y(1)']],
    // the junction home reads over T3 at caution: the signaller holds it before throwing T3 (route locking)
    ['junction home held to release the branch turnout', { type: 'override', signal: 'SD1', mode: 'hold', at: at(88), by: 'demo' }, ['SD1 R']],
    ['branch turnout reversed for the return', turn('T3', 'reverse', 90), ['SB2 Y']],
    // the up starter reads over T2 (in UM3): held first, then the junction is set for the branch
    ['up starter held to release the up junction', { type: 'override', signal: 'SU2', mode: 'hold', at: at(92), by: 'demo' }, ['SU1 Y', 'SU2 R']],
    ['up junction set for the branch', turn('T2', 'reverse', 95), ['SB2 G', 'SB3 G']],
    ['departs Carrowmere past the starter', on('BR', 110), ['SB2 R']],
    ['clears the platform', off('CP', 114), ['SB1 Y']],
    ['takes the branch up connection', on('JU', 130), []],
    ['clears the branch', off('BR', 133), []],
    ['joins the up main past the branch up signal', on('UM3', 145), ['SB3 R']],
    ['clears the up connection', off('JU', 148), ['SB2 Y']],
    ['passes the up main signal', on('UM4', 165), ['SU3 R']],
    ['clears the junction', off('UM3', 168), ['SB2 G', 'SB3 Y']],
    ['enters fiddle road 1', on('FY1', 190), []],
    ['clears the up departure: fiddle road 1 is still in its section', off('UM4', 195), []],
  ]

  it('gives the expected indication changes at every step, and the description follows the train', () => {
    const layout = demoLayout()
    let state: LayoutState = initialState(layout)
    for (const e of setup) state = applyEvent(layout, state, e).state
    expect(layout.signals.map(s => `${s.id} ${show(ind(layout, state)[s.id]!)}`).join(', ')).toBe(afterSetup)
    const all: Change[] = []
    for (const [name, event, want] of steps) {
      const r = applyEvent(layout, state, event)
      state = r.state
      all.push(...r.changes)
      expect(indicationChanges(r.changes), name).toEqual(want)
    }
    expect(all.filter(c => c.type === 'alarm')).toEqual([])
    expect(all.filter(c => c.type === 'error')).toEqual([])
    expect(state.descriptions).toEqual({ FY1: '2C05' })
    const berths = all.flatMap(c => (c.type === 'description' && c.reason === 'step' ? [c.block] : []))
    expect(berths).toEqual(['DM1', 'DM2', 'JD', 'BR', 'CP', 'BR', 'JU', 'UM3', 'UM4', 'FY1'])
  })

  it('reports the scale speed over each block the described train ran through', () => {
    const layout = demoLayout()
    const engine = createEngine(layout)
    for (const e of setup) engine.apply(e)
    const speeds = steps.flatMap(([, e]) => engine.apply(e)).flatMap(c => (c.type === 'speed' ? [[c.block, Number(c.kmh.toFixed(2))]] : []))
    // computed by hand: length / time in block x 76.2 x 3.6, e.g. fiddle road 3: 1.8 m / 10 s x 76.2 x 3.6 = 49.38
    expect(speeds).toEqual([
      ['FY3', 49.38],
      ['DM1', 31.55],
      ['DM2', 46.63],
      ['JD', 24.69],
      ['BR', 27.43],
      ['CP', 10.97],
      ['BR', 27.43],
      ['JU', 20.12],
      ['UM3', 24.69],
      ['UM4', 26.33],
    ])
  })

  it('raises an alarm when the train runs past Carrowmere home at danger', () => {
    const layout = demoLayout()
    const engine = createEngine(layout)
    for (const e of setup) engine.apply(e)
    for (const [, e] of steps.slice(0, 10)) engine.apply(e) // the train is on the branch, in BR
    engine.apply({ type: 'override', signal: 'SB1', mode: 'hold', at: at(70), by: 'signaller-2' })
    const changes = engine.apply(on('CP', 80))
    expect(changes.filter(c => c.type === 'alarm').map(c => c.type === 'alarm' && c.alarm)).toEqual([
      { id: 'spad-1', kind: 'spad', signal: 'SB1', block: 'CP', description: '2C05', at: at(80), acknowledgedAt: null },
    ])
  })
})
