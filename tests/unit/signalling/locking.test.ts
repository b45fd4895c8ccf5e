// Turnout locking, one small layout per situation, each row naming the principle it checks.
// Sources: 49 CFR 236.207 and 236.314 [P] (a switch lock is released only when the signals governing
// movements over the switch display stop), 49 CFR 236 Subpart G "detector locking" [M for the section
// number] (no throw while a train occupies the track over the switch); REFERENCES.md §10. Rows marked
// "common practice" follow the British track- and route-locking practice as commonly described [M].
import { describe, expect, it } from 'vitest'
import { applyEvent, computeIndications, initialState, turnoutLock } from '#shared/signalling'
import type { Layout, LayoutEvent, LayoutState } from '#shared/signalling'
import { block, mode, occ, run, set, valid } from './build'

const layoutOf = (def: Record<string, unknown>) => valid({ schema: 1, name: 'locking', scale: { name: 'OO', ratio: 76.2 }, ...def })
const links = (...pairs: string[]) => pairs.map(p => ({ from: p.split('>')[0]!, to: p.split('>')[1]! }))
const sig = (id: string, kind: string, from: string, protects: string) => ({ id, name: id, kind, from, protects, endOfLine: 'clear-ahead' })

// Facing turnout TF in J: A -> J, then J -> N (normal) or J -> R (reverse). S1 (A -> J) reads over it; its
// section runs on to N or R, where the next signals stand at their exits.
const facing = layoutOf({
  blocks: ['A', 'J', 'N', 'R', 'N2', 'R2'].map(b => block(b)),
  links: links('A>J', 'J>N', 'J>R', 'N>N2', 'R>R2'),
  turnouts: [{ id: 'TF', block: 'J', normal: 'N', reverse: 'R' }],
  signals: [sig('S1', 'three-aspect', 'A', 'J'), sig('SN', 'three-aspect', 'N', 'N2'), sig('SR', 'three-aspect', 'R', 'R2')],
})

// Trailing turnout TT in M: N -> M (normal leg) and R -> M (reverse leg) join, then M -> E. SN and SR read into M.
const trailing = layoutOf({
  blocks: ['N', 'R', 'M', 'E', 'E2'].map(b => block(b)),
  links: links('N>M', 'R>M', 'M>E', 'E>E2'),
  turnouts: [{ id: 'TT', block: 'M', normal: 'N', reverse: 'R' }],
  signals: [sig('SN', 'two-aspect', 'N', 'M'), sig('SR', 'two-aspect', 'R', 'M'), sig('SE', 'two-aspect', 'E', 'E2')],
})

// TB sits in B, the block at whose exit the next signals (S2 to C, S3 to D) stand: the last block of S1's section.
const atNext = layoutOf({
  blocks: ['A', 'B', 'C', 'D'].map(b => block(b)),
  links: links('A>B', 'B>C', 'B>D'),
  turnouts: [{ id: 'TB', block: 'B', normal: 'C', reverse: 'D' }],
  signals: [sig('S1', 'four-aspect', 'A', 'B'), sig('S2', 'two-aspect', 'B', 'C'), sig('S3', 'two-aspect', 'B', 'D')],
})

// A distant signal DS (A -> J) reads over TF in J; the section of the stop signal S0 (Z -> A) behind it runs on
// past the distant, over TF too.
const distant = layoutOf({
  blocks: ['Z', 'A', 'J', 'N', 'R', 'N2', 'R2'].map(b => block(b)),
  links: links('Z>A', 'A>J', 'J>N', 'J>R', 'N>N2', 'R>R2'),
  turnouts: [{ id: 'TF', block: 'J', normal: 'N', reverse: 'R' }],
  signals: [sig('S0', 'two-aspect', 'Z', 'A'), { ...sig('DS', 'distant', 'A', 'J') }, sig('SN', 'two-aspect', 'N', 'N2'), sig('SR', 'two-aspect', 'R', 'R2')],
})

const state = (layout: Layout, events: (l: Layout) => LayoutEvent[]): LayoutState => run(layout, events(layout)).state
const lockText = (layout: Layout, s: LayoutState, id: string) => {
  const lock = turnoutLock(layout, s, id)
  return lock === null ? 'free' : lock.reason === 'occupied' ? `occupied ${lock.block}` : `route ${lock.signal}`
}

describe('turnoutLock', () => {
  const rows: [string, string, Layout, string, (l: Layout) => LayoutEvent[], string][] = [
    // [principle, situation, layout, turnout, events, expected]
    ['route locking (49 CFR 236.314)', 'facing, S1 off over it', facing, 'TF', () => [set('TF', 'normal')], 'route S1'],
    ['route locking (49 CFR 236.314)', 'facing, set reverse, S1 off over it', facing, 'TF', () => [set('TF', 'reverse')], 'route S1'],
    ['released when the signal displays stop (49 CFR 236.314)', 'facing, S1 held at danger', facing, 'TF', () => [set('TF', 'normal'), mode('S1', 'hold')], 'free'],
    ['released when the signal displays stop (49 CFR 236.314)', 'facing, S1 at danger for a train further on in N', facing, 'TF', l => [set('TF', 'normal'), occ(l, 'N')], 'free'],
    ['detector (track) locking (49 CFR 236 Subpart G)', 'facing, a train on J', facing, 'TF', l => [set('TF', 'normal'), occ(l, 'J')], 'occupied J'],
    ['track locking checked first (common practice)', 'facing, a train on J and S1 cleared by hand', facing, 'TF', l => [set('TF', 'normal'), mode('S1', 'clear'), occ(l, 'J')], 'occupied J'],
    ['no route is set over an unknown turnout: its signal shows stop (common practice)', 'facing, position unknown', facing, 'TF', () => [], 'free'],
    ['route locking (49 CFR 236.314)', 'trailing, set normal: SN off over it', trailing, 'TT', () => [set('TT', 'normal')], 'route SN'],
    ['route locking (49 CFR 236.314)', 'trailing, set reverse: SR off over it', trailing, 'TT', () => [set('TT', 'reverse')], 'route SR'],
    ['released when the signal displays stop (49 CFR 236.314)', 'trailing, set normal, SN held', trailing, 'TT', () => [set('TT', 'normal'), mode('SN', 'hold')], 'free'],
    ['detector (track) locking (49 CFR 236 Subpart G)', 'trailing, a train on M', trailing, 'TT', l => [set('TT', 'normal'), occ(l, 'M')], 'occupied M'],
    ['route locking over the whole section, up to the next signal (DESIGN.md section rule)', 'in the block of the next signal, S1 off', atNext, 'TB', () => [set('TB', 'normal')], 'route S1'],
    ['a signal does not lock a turnout behind it (common practice)', 'in the block of the next signal, S1 held: S2 and S3 stand beyond it', atNext, 'TB', () => [set('TB', 'normal'), mode('S1', 'hold')], 'free'],
    ['a cleared signal locks like any proceed aspect (49 CFR 236.314)', 'S1 cleared by hand, line ahead at danger', facing, 'TF', () => [set('TF', 'normal'), mode('SN', 'hold'), mode('S1', 'clear')], 'route S1'],
    ['a distant signal governs no movement over the switch: it locks nothing (common practice)', 'S0 held: only the distant reads over it, off', distant, 'TF', () => [set('TF', 'normal'), mode('S0', 'hold')], 'free'],
    ['route locking (49 CFR 236.314); a section runs on past a distant (DESIGN.md)', 'S0 off: its section passes the distant', distant, 'TF', () => [set('TF', 'normal')], 'route S0'],
    ['detector (track) locking (49 CFR 236 Subpart G)', 'only a distant reads over it, a train on J', distant, 'TF', l => [set('TF', 'normal'), occ(l, 'J')], 'occupied J'],
  ]
  it.each(rows)('%s: %s', (_principle, _situation, layout, turnout, events, want) => {
    const s = state(layout, events)
    expect(lockText(layout, s, turnout)).toBe(want)
    // a route lock is held by a stop signal that really shows something other than danger
    const lock = turnoutLock(layout, s, turnout)
    if (lock?.reason === 'route') expect(computeIndications(layout, s)[lock.signal]!.aspect).not.toBe('danger')
  })

  it('the distant in that layout does show proceed, so it is not locking only because it is off', () => {
    const s = state(distant, () => [set('TF', 'normal'), mode('S0', 'hold')])
    expect(computeIndications(distant, s).DS!.aspect).toBe('proceed')
  })

  it('throws a RangeError for a turnout the layout does not have', () => {
    expect(() => turnoutLock(facing, initialState(facing), 'T99')).toThrow(RangeError)
  })
})

describe('a reported move under a lock', () => {
  it('is applied (it is a fact) and raises an alarm naming the turnout, its block, the locking signal and the train', () => {
    let s = state(facing, l => [set('TF', 'normal'), occ(l, 'J')])
    s = applyEvent(facing, s, { type: 'interpose', block: 'J', description: '1F42', at: 1 }).state
    const r = applyEvent(facing, s, { type: 'turnout', turnout: 'TF', position: 'reverse', at: 2 })
    expect(r.state.turnouts.TF).toBe('reverse')
    expect(r.changes.filter(c => c.type === 'alarm').map(c => c.type === 'alarm' && c.alarm)).toEqual([
      { id: 'lock-1', kind: 'turnout-under-lock', turnout: 'TF', block: 'J', signal: null, description: '1F42', at: 2, acknowledgedAt: null },
    ])
  })

  it('names the signal that read over it, and is acknowledged like any alarm', () => {
    const s = state(facing, () => [set('TF', 'normal')])
    const r = applyEvent(facing, s, { type: 'turnout', turnout: 'TF', position: 'reverse', at: 3 })
    const alarm = r.state.alarms[0]!
    expect(alarm).toMatchObject({ kind: 'turnout-under-lock', turnout: 'TF', signal: 'S1', block: 'J', description: null })
    const acked = applyEvent(facing, r.state, { type: 'acknowledge', alarm: alarm.id, at: 4, by: '7' })
    expect(acked.state.alarms[0]).toMatchObject({ acknowledgedAt: 4, acknowledgedBy: '7' })
  })

  it('raises nothing for a first report (from unknown) under a train: it says where the turnout lies, it is no move', () => {
    const s = state(facing, l => [occ(l, 'J')])
    expect(turnoutLock(facing, s, 'TF')).toEqual({ reason: 'occupied', block: 'J' })
    const r = applyEvent(facing, s, { type: 'turnout', turnout: 'TF', position: 'normal', at: 7 })
    expect(r.state.turnouts.TF).toBe('normal')
    expect(r.changes.some(c => c.type === 'alarm')).toBe(false)
  })

  it('raises nothing for a move of a free turnout, or a report of the position it already has', () => {
    const held = state(facing, () => [set('TF', 'normal'), mode('S1', 'hold')])
    expect(applyEvent(facing, held, { type: 'turnout', turnout: 'TF', position: 'reverse', at: 5 }).changes.some(c => c.type === 'alarm')).toBe(false)
    const off = state(facing, () => [set('TF', 'normal')])
    expect(applyEvent(facing, off, { type: 'turnout', turnout: 'TF', position: 'normal', at: 6 }).changes).toEqual([])
  })
})
