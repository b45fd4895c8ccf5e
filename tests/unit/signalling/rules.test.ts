// The signalling rules of Blockbell, one table per rule, on small hand-built layouts.
// Aspects are written R (danger), Y (caution), YY (preliminary caution), G (proceed).
import { describe, expect, it } from 'vitest'
import { applyEvent, computeIndications, initialState } from '#shared/signalling'
import type { Change, Layout, LayoutEvent } from '#shared/signalling'
import { alarmsOf, aspects, block, clr, ind, line, mode, occ, run, set, valid, withOccupied } from './build'

const layoutOf = (def: Record<string, unknown>) =>
  valid({ schema: 1, name: 'test', scale: { name: 'OO', ratio: 76.2 }, turnouts: [], signals: [], ...def })
const links = (...pairs: string[]) =>
  pairs.map((p) => {
    const [from, to] = p.split('>')
    return { from: from!, to: to! }
  })
const sig = (id: string, kind: string, from: string, protects: string, extra: Record<string, unknown> = {}) => ({
  id,
  name: id,
  kind,
  from,
  protects,
  ...extra,
})
const descriptions = (c: Change[]) => c.filter(x => x.type === 'description')

describe('automatic aspects by kind, on a line of four sections (open exit)', () => {
  // each row: occupied blocks -> S1 S2 S3 S4
  const rows: [string, string[], string][] = [
    ['four-aspect', [], 'G G G G'],
    ['four-aspect', ['B4'], 'G YY Y R'],
    ['four-aspect', ['B3'], 'YY Y R G'],
    ['four-aspect', ['B1', 'B3'], 'R Y R G'],
    ['three-aspect', ['B4'], 'G G Y R'],
    ['three-aspect', ['B2'], 'Y R G G'],
    ['two-aspect', ['B4'], 'G G G R'],
    ['two-aspect', ['B2', 'B3'], 'G R R G'],
  ]
  it.each(rows)('%s with %j occupied: %s', (kind, occupied, want) => {
    const layout = line(4, kind as 'four-aspect')
    expect(aspects(layout, withOccupied(layout, occupied))).toBe(want)
  })
})

describe('end of line', () => {
  const rows: [string, 'open' | 'buffer', string][] = [
    ['four-aspect', 'buffer', 'G YY Y'],
    ['four-aspect', 'open', 'G G G'],
    ['three-aspect', 'buffer', 'G G Y'],
    ['three-aspect', 'open', 'G G G'],
    ['two-aspect', 'buffer', 'G G G'],
    ['two-aspect', 'open', 'G G G'],
  ]
  it.each(rows)('%s, exit %s: %s', (kind, exit, want) => {
    const layout = line(3, kind as 'four-aspect', exit)
    expect(aspects(layout, initialState(layout))).toBe(want)
  })

  it('a signal with no endOfLine setting reads danger ahead', () => {
    const layout = layoutOf({ blocks: [block('A'), block('B')], links: links('A>B'), signals: [sig('S', 'three-aspect', 'A', 'B')] })
    expect(aspects(layout, initialState(layout))).toBe('Y')
  })
})

/** P -> Q -> R -> X: two-aspect stop H at P>Q, distant D at Q>R, two-aspect stop S at R>X (open exit). */
function withDistant(): Layout {
  return layoutOf({
    blocks: ['P', 'Q', 'R', 'X'].map(b => block(b)),
    links: links('P>Q', 'Q>R', 'R>X'),
    signals: [sig('H', 'two-aspect', 'P', 'Q'), sig('D', 'distant', 'Q', 'R'), sig('S', 'two-aspect', 'R', 'X', { endOfLine: 'clear-ahead' })],
  })
}

describe('distant signals', () => {
  // A distant never shows danger: caution when its section is occupied or the stop signal ahead is at danger.
  // Distants do not end a stop signal's section: H's section runs over Q and R up to S.
  const rows: [string[], string][] = [
    [[], 'G G G'],
    [['X'], 'G Y R'],
    [['R'], 'R Y G'],
    [['Q'], 'R G G'],
  ]
  it.each(rows)('with %j occupied, H D S show %s', (occupied, want) => {
    const layout = withDistant()
    expect(aspects(layout, withOccupied(layout, occupied))).toBe(want)
  })
  it('held, a distant shows caution, not danger', () => {
    const layout = withDistant()
    expect(aspects(layout, run(layout, [mode('D', 'hold')]).state)).toBe('G Y G')
  })
  it('a distant at the end of the line reads its endOfLine setting', () => {
    const mk = (endOfLine: string) =>
      layoutOf({ blocks: [block('A'), block('B')], links: links('A>B'), signals: [sig('D', 'distant', 'A', 'B', { endOfLine })] })
    expect(aspects(mk('danger-ahead'), initialState(mk('danger-ahead')))).toBe('Y')
    expect(aspects(mk('clear-ahead'), initialState(mk('clear-ahead')))).toBe('G')
  })
})

describe('overrides', () => {
  const rows: { name: string, kind: string, exit: 'open' | 'buffer', events: (l: Layout) => LayoutEvent[], want: string, exceeds: string[] }[] = [
    { name: 'hold shows danger on a clear line', kind: 'four-aspect', exit: 'open', events: () => [mode('S2', 'hold')], want: 'Y R G', exceeds: [] },
    {
      name: 'clear shows proceed with danger ahead, marked as more than the line justifies',
      kind: 'four-aspect',
      exit: 'open',
      events: l => [occ(l, 'B3'), mode('S2', 'clear')],
      want: 'G G R',
      exceeds: ['S2'],
    },
    {
      name: 'clear at the end of a line read as danger ahead',
      kind: 'three-aspect',
      exit: 'buffer',
      events: () => [mode('S3', 'clear')],
      want: 'G G G',
      exceeds: ['S3'],
    },
    {
      name: 'clear where the line already gives proceed is not marked',
      kind: 'three-aspect',
      exit: 'open',
      events: () => [mode('S1', 'clear')],
      want: 'G G G',
      exceeds: [],
    },
    {
      name: 'clear with its own section occupied shows danger',
      kind: 'four-aspect',
      exit: 'open',
      events: l => [occ(l, 'B2'), mode('S2', 'clear')],
      want: 'Y R G',
      exceeds: [],
    },
    {
      name: 'a train passing a cleared signal drops it to danger',
      kind: 'three-aspect',
      exit: 'buffer',
      events: l => [mode('S3', 'clear'), occ(l, 'B2'), occ(l, 'B3')],
      want: 'Y R R',
      exceeds: [],
    },
    {
      name: 'back to auto from hold',
      kind: 'four-aspect',
      exit: 'open',
      events: () => [mode('S2', 'hold'), mode('S2', 'auto')],
      want: 'G G G',
      exceeds: [],
    },
  ]
  it.each(rows)('$name', ({ kind, exit, events, want, exceeds }) => {
    const layout = line(3, kind as 'four-aspect', exit)
    const { state } = run(layout, events(layout))
    expect(aspects(layout, state)).toBe(want)
    expect(Object.entries(ind(layout, state)).filter(([, i]) => i.exceedsLine).map(([id]) => id)).toEqual(exceeds)
    for (const s of layout.signals) expect(ind(layout, state)[s.id]!.override).toBe(state.overrides[s.id])
  })

  it('raises the signal revision on each change of override, not on repeats', () => {
    const layout = line(2, 'three-aspect')
    const { state, changes } = run(layout, [mode('S1', 'hold'), mode('S1', 'hold'), mode('S1', 'clear')])
    expect(state.signalRevisions).toEqual({ S1: 2, S2: 0 })
    expect(changes.filter(c => c.type === 'override').map(c => c.type === 'override' && c.revision)).toEqual([1, 2])
  })
})

/** B0 > B1 > B2 > B3 with facing turnout T in B3: normal to B4m, reverse to B4d; S3 at B2>B3 is the junction signal. */
function facingJunction(signalOnBranch = true): Layout {
  return layoutOf({
    blocks: ['B0', 'B1', 'B2', 'B3', 'B4m', 'B5m', 'B4d', 'B5d'].map(b => block(b)),
    links: links('B0>B1', 'B1>B2', 'B2>B3', 'B3>B4m', 'B4m>B5m', 'B3>B4d', 'B4d>B5d'),
    turnouts: [{ id: 'T', block: 'B3', normal: 'B4m', reverse: 'B4d' }],
    signals: [
      sig('S2', 'four-aspect', 'B1', 'B2'),
      sig('S3', 'four-aspect', 'B2', 'B3', { indicators: { B4d: '4' } }),
      sig('S4m', 'four-aspect', 'B3', 'B4m', { endOfLine: 'clear-ahead' }),
      ...(signalOnBranch ? [sig('S4d', 'four-aspect', 'B3', 'B4d', { endOfLine: 'danger-ahead' })] : [sig('S5d', 'four-aspect', 'B4d', 'B5d', { endOfLine: 'danger-ahead' })]),
    ],
  })
}

describe('routes through a facing turnout', () => {
  // S2 S3 S4m S4d (or S5d): the branch signal reads a buffer stop beyond (danger ahead), so it shows caution when clear
  const rows: { name: string, branchSignal: boolean, events: (l: Layout) => LayoutEvent[], want: string, indicator: string | null }[] = [
    { name: 'turnout position unknown: the junction signal is at danger', branchSignal: true, events: () => [], want: 'Y R G Y', indicator: null },
    { name: 'normal: reads the main line', branchSignal: true, events: () => [set('T', 'normal')], want: 'G G G Y', indicator: null },
    {
      name: 'reverse: reads the branch signal, indicator lit',
      branchSignal: true,
      events: () => [set('T', 'reverse')],
      want: 'G YY G Y',
      indicator: '4',
    },
    {
      name: 'normal: a train on the branch does not concern the junction signal',
      branchSignal: true,
      events: l => [set('T', 'normal'), occ(l, 'B4d')],
      want: 'G G G R',
      indicator: null,
    },
    {
      name: 'reverse back to unknown: danger again',
      branchSignal: true,
      events: () => [set('T', 'reverse'), set('T', 'unknown')],
      want: 'Y R G Y',
      indicator: null,
    },
    {
      name: 'no signal at the branch exit: the section runs on along the set leg to the next signal',
      branchSignal: false,
      events: l => [set('T', 'reverse'), occ(l, 'B4d')],
      want: 'Y R G Y',
      indicator: null,
    },
    {
      name: 'no signal at the branch exit, turnout normal: the branch block is not in the section',
      branchSignal: false,
      events: l => [set('T', 'normal'), occ(l, 'B4d')],
      want: 'G G G Y',
      indicator: null,
    },
    {
      name: 'no signal at the branch exit, branch clear: indicator lit, reading the next signal on the branch',
      branchSignal: false,
      events: () => [set('T', 'reverse')],
      want: 'G YY G Y',
      indicator: '4',
    },
  ]
  it.each(rows)('$name', ({ branchSignal, events, want, indicator }) => {
    const layout = facingJunction(branchSignal)
    const { state } = run(layout, events(layout))
    expect(aspects(layout, state)).toBe(want)
    expect(ind(layout, state).S3!.indicator).toBe(indicator)
  })

  it('clear cannot show proceed over a turnout whose position is unknown', () => {
    const layout = facingJunction(true)
    const { state } = run(layout, [mode('S3', 'clear')])
    expect(ind(layout, state).S3).toMatchObject({ aspect: 'danger', override: 'clear', exceedsLine: false })
    const normal = run(layout, [set('T', 'normal')], state).state
    expect(ind(layout, normal).S3).toMatchObject({ aspect: 'proceed', override: 'clear', exceedsLine: false })
  })

  it('the indicator goes out when the junction signal goes to danger, and only the junction signal shows it', () => {
    const layout = facingJunction(true)
    const { state } = run(layout, [set('T', 'reverse'), mode('S3', 'hold')])
    expect(ind(layout, state).S3).toMatchObject({ aspect: 'danger', indicator: null })
    expect(Object.values(ind(layout, state)).filter(i => i.indicator !== null)).toEqual([])
  })
})

/** Two lines A0 > A and C0 > C merge into M (trailing turnout T in M: normal A, reverse C), M > N. */
function trailingJunction(): Layout {
  return layoutOf({
    blocks: ['A0', 'A', 'C0', 'C', 'M', 'N'].map(b => block(b)),
    links: links('A0>A', 'A>M', 'C0>C', 'C>M', 'M>N'),
    turnouts: [{ id: 'T', block: 'M', normal: 'A', reverse: 'C' }],
    signals: [
      sig('SA0', 'four-aspect', 'A0', 'A'),
      sig('SA', 'four-aspect', 'A', 'M'),
      sig('SC', 'three-aspect', 'C', 'M'),
      sig('SM', 'three-aspect', 'M', 'N', { endOfLine: 'clear-ahead' }),
    ],
  })
}

describe('routes through a trailing turnout', () => {
  const rows: [string, LayoutEvent[], string][] = [
    ['unknown: both lines into the merge at danger', [], 'Y R R G'],
    ['normal: the A line reads on, the C line is at danger', [set('T', 'normal')], 'G G R G'],
    ['reverse: the C line reads on, the A line is at danger', [set('T', 'reverse')], 'Y R G G'],
  ]
  it.each(rows)('%s', (_name, events, want) => {
    const layout = trailingJunction()
    expect(aspects(layout, run(layout, events).state)).toBe(want)
  })
})

describe('loops', () => {
  /** L0 > L1 > L2 > L3 > L0 with a four-aspect signal at each block exit. */
  const loop = () =>
    layoutOf({
      blocks: ['L0', 'L1', 'L2', 'L3'].map(b => block(b)),
      links: links('L0>L1', 'L1>L2', 'L2>L3', 'L3>L0'),
      signals: [0, 1, 2, 3].map(i => sig(`S${i}`, 'four-aspect', `L${i}`, `L${(i + 1) % 4}`)),
    })
  it('all clear: proceed all round', () => {
    const layout = loop()
    expect(aspects(layout, initialState(layout))).toBe('G G G G')
  })
  it('one train: danger, caution and preliminary caution behind it, proceed beyond', () => {
    const layout = loop()
    // train in L2: S1 protects L2
    expect(aspects(layout, withOccupied(layout, ['L2']))).toBe('Y R G YY')
  })
  it('a loop with one signal: its section is the whole loop', () => {
    const layout = layoutOf({
      blocks: ['L0', 'L1', 'L2'].map(b => block(b)),
      links: links('L0>L1', 'L1>L2', 'L2>L0'),
      signals: [sig('S', 'three-aspect', 'L0', 'L1')],
    })
    expect(aspects(layout, initialState(layout))).toBe('G')
    expect(aspects(layout, withOccupied(layout, ['L0']))).toBe('R')
  })
})

describe('signals passed at danger', () => {
  it('raises one alarm naming the signal, the block entered and the description, kept after acknowledgement', () => {
    const layout = line(3, 'three-aspect')
    const start = run(layout, [occ(layout, 'B1'), { type: 'interpose', block: 'B1', description: '2C05', at: 10 }, mode('S2', 'hold', 20)]).state
    const r = applyEvent(layout, start, occ(layout, 'B2', 30))
    const raised = alarmsOf(r.changes)
    expect(raised).toEqual([{ id: 'spad-1', kind: 'spad', signal: 'S2', block: 'B2', description: '2C05', at: 30, acknowledgedAt: null }])
    expect(r.state.alarms).toEqual(raised)
    const ack = applyEvent(layout, r.state, { type: 'acknowledge', alarm: 'spad-1', at: 40, by: 'user-7' })
    expect(ack.changes).toEqual([{ type: 'alarm-acknowledged', alarm: { ...raised[0], acknowledgedAt: 40, acknowledgedBy: 'user-7' } }])
    expect(ack.state.alarms).toHaveLength(1)
    expect(ack.state.alarms[0]!.acknowledgedAt).toBe(40)
    const again = applyEvent(layout, ack.state, { type: 'acknowledge', alarm: 'spad-1', at: 50 })
    expect(again.changes[0]).toMatchObject({ type: 'error', code: 'already-acknowledged' })
    expect(again.state).toBe(ack.state)
  })

  const rows: { name: string, setup: (l: Layout) => LayoutEvent[], enter: string, alarms: string[] }[] = [
    { name: 'danger because the section is occupied', setup: l => [occ(l, 'B1'), occ(l, 'B2'), clr(l, 'B2'), occ(l, 'B3')], enter: 'B2', alarms: [] },
    { name: 'a held signal', setup: l => [occ(l, 'B1'), mode('S2', 'hold')], enter: 'B2', alarms: ['S2'] },
    { name: 'caution is not danger', setup: l => [occ(l, 'B1'), occ(l, 'B3')], enter: 'B2', alarms: [] },
    { name: 'proceed', setup: l => [occ(l, 'B1')], enter: 'B2', alarms: [] },
    { name: 'no train behind: an unexpected occupancy, not a SPAD', setup: () => [mode('S2', 'hold')], enter: 'B2', alarms: [] },
  ]
  it.each(rows)('$name', ({ setup, enter, alarms }) => {
    const layout = line(3, 'three-aspect')
    const { state } = run(layout, setup(layout))
    const r = applyEvent(layout, state, occ(layout, enter))
    expect(alarmsOf(r.changes).map(a => a.signal)).toEqual(alarms)
  })

  it('judged on the indication just before the event: a signal at danger for a train two sections ahead', () => {
    // S1's section reaches over a facing turnout with no signal on the leg: B1 and B2 (branch), danger while B2 is occupied
    const layout = layoutOf({
      blocks: ['B0', 'B1', 'B2', 'M'].map(b => block(b)),
      links: links('B0>B1', 'B1>B2', 'B1>M'),
      turnouts: [{ id: 'T', block: 'B1', normal: 'M', reverse: 'B2' }],
      signals: [sig('S1', 'two-aspect', 'B0', 'B1')],
    })
    const { state } = run(layout, [set('T', 'reverse'), occ(layout, 'B2'), occ(layout, 'B0')])
    expect(aspects(layout, state)).toBe('R')
    expect(alarmsOf(applyEvent(layout, state, occ(layout, 'B1')).changes).map(a => a.signal)).toEqual(['S1'])
  })

  it('into a merge with trains standing on both lines: the moving train decides', () => {
    const layout = trailingJunction()
    // a train stands at SC in C; another runs from A0 into A, with T set for A, and on into M
    const { state } = run(layout, [set('T', 'normal'), occ(layout, 'C', 100), occ(layout, 'A0', 200), occ(layout, 'A', 300), clr(layout, 'A0', 400)])
    expect(aspects(layout, state, ['SA', 'SC'])).toBe('G R')
    const r = applyEvent(layout, state, occ(layout, 'M', 500))
    expect(alarmsOf(r.changes)).toEqual([])
  })

  it('into a merge set against the moving train: SPAD at its signal', () => {
    const layout = trailingJunction()
    const { state } = run(layout, [set('T', 'reverse'), occ(layout, 'A', 100)])
    expect(aspects(layout, state, ['SA'])).toBe('R')
    expect(alarmsOf(applyEvent(layout, state, occ(layout, 'M', 200)).changes).map(a => a.signal)).toEqual(['SA'])
  })

  it('unknown alarm id: an error, state unchanged', () => {
    const layout = line(2, 'two-aspect')
    const s = initialState(layout)
    const r = applyEvent(layout, s, { type: 'acknowledge', alarm: 'spad-9', at: 1 })
    expect(r.changes).toEqual([{ type: 'error', code: 'unknown-id', path: 'alarm', message: 'unknown alarm "spad-9"' }])
    expect(r.state).toBe(s)
  })
})

describe('train descriptions', () => {
  it('step forward into the next block and leave the old berth when it clears', () => {
    const layout = line(3, 'three-aspect')
    const { state, changes } = run(layout, [
      occ(layout, 'B0', 1000),
      { type: 'interpose', block: 'B0', description: '1F42', at: 1500, by: 'ann' },
      occ(layout, 'B1', 2000),
      clr(layout, 'B0', 3000),
      occ(layout, 'B2', 4000),
    ])
    expect(state.descriptions).toEqual({ B1: '1F42', B2: '1F42' })
    expect(descriptions(changes)).toEqual([
      { type: 'description', block: 'B0', description: '1F42', reason: 'interpose', at: 1500, by: 'ann' },
      { type: 'description', block: 'B1', description: '1F42', reason: 'step', from: 'B0', at: 2000 },
      { type: 'description', block: 'B0', description: null, reason: 'clear', at: 3000 },
      { type: 'description', block: 'B2', description: '1F42', reason: 'step', from: 'B1', at: 4000 },
    ])
  })

  it('a new occupancy with no described neighbour behind it stays undescribed', () => {
    const layout = line(3, 'three-aspect')
    const { state } = run(layout, [occ(layout, 'B0'), { type: 'interpose', block: 'B0', description: '1F42', at: 5 }, occ(layout, 'B2')])
    expect(state.descriptions).toEqual({ B0: '1F42' })
  })

  it('an undescribed train steps nothing; an interpose replaces what is there; an empty interpose cancels', () => {
    const layout = line(3, 'three-aspect')
    const { state } = run(layout, [
      occ(layout, 'B1'),
      occ(layout, 'B2'),
      { type: 'interpose', block: 'B2', description: '2A10', at: 1 },
      { type: 'interpose', block: 'B2', description: ' 2A11 ', at: 2 },
      { type: 'interpose', block: 'B1', description: '5X99', at: 3 },
      { type: 'interpose', block: 'B1', description: '', at: 4 },
    ])
    expect(state.descriptions).toEqual({ B2: '2A11' })
  })

  it('steps along the set route only: not across a trailing turnout set against it', () => {
    const layout = trailingJunction()
    const { state } = run(layout, [
      occ(layout, 'A', 10),
      occ(layout, 'C', 20),
      { type: 'interpose', block: 'A', description: '1A01', at: 30 },
      { type: 'interpose', block: 'C', description: '2C02', at: 40 },
      set('T', 'reverse', 50),
      occ(layout, 'M', 60),
    ])
    expect(state.descriptions.M).toBe('2C02')
  })

  it('on a line worked both ways, the description steps in the direction the train runs', () => {
    const layout = layoutOf({
      blocks: ['W', 'X', 'Y'].map(b => block(b)),
      links: links('W>X', 'X>W', 'X>Y', 'Y>X'),
      signals: [sig('E1', 'two-aspect', 'W', 'X'), sig('E2', 'two-aspect', 'X', 'Y'), sig('W2', 'two-aspect', 'Y', 'X'), sig('W1', 'two-aspect', 'X', 'W')],
    })
    const { state } = run(layout, [
      occ(layout, 'Y'),
      { type: 'interpose', block: 'Y', description: '2B20', at: 1 },
      occ(layout, 'X'),
      clr(layout, 'Y'),
      occ(layout, 'W'),
      clr(layout, 'X'),
    ])
    expect(state.descriptions).toEqual({ W: '2B20' })
  })

  // Berth stepping (docs/sources.md §5: a CA Berth Step moves a description on when the stepping conditions
  // hold); the condition used here — the rear block clears while the block ahead on the set route is occupied
  // and undescribed, i.e. a train standing across both — is our own rule.
  it('moves on from a cleared block into the occupied, undescribed block ahead (train standing across two)', () => {
    const layout = line(3, 'three-aspect')
    const { state, changes } = run(layout, [
      occ(layout, 'B0', 1000),
      occ(layout, 'B1', 1100),
      { type: 'interpose', block: 'B0', description: '2J01', at: 1500 },
      clr(layout, 'B0', 3000),
    ])
    expect(state.descriptions).toEqual({ B1: '2J01' })
    expect(descriptions(changes).slice(1)).toEqual([
      { type: 'description', block: 'B1', description: '2J01', reason: 'step', from: 'B0', at: 3000 },
      { type: 'description', block: 'B0', description: null, reason: 'clear', at: 3000 },
    ])
  })

  it('does not move on into a block ahead that already has its own description', () => {
    const layout = line(3, 'three-aspect')
    const { state, changes } = run(layout, [
      occ(layout, 'B0', 1000),
      occ(layout, 'B1', 1100),
      { type: 'interpose', block: 'B1', description: '1A40', at: 1200 },
      { type: 'interpose', block: 'B0', description: '2J01', at: 1500 },
      clr(layout, 'B0', 3000),
    ])
    expect(state.descriptions).toEqual({ B1: '1A40' })
    expect(descriptions(changes).at(-1)).toEqual({ type: 'description', block: 'B0', description: null, reason: 'lost', lost: '2J01', at: 3000 })
  })

  it('does not move on across a turnout set against the route, and says the description was lost', () => {
    // trailing junction: A and C both lead into M through turnout T (normal leg A, reverse leg C)
    const layout = layoutOf({
      blocks: ['A', 'C', 'M'].map(b => block(b)),
      links: links('A>M', 'C>M'),
      turnouts: [{ id: 'T', block: 'M', normal: 'A', reverse: 'C' }],
      signals: [sig('SA', 'two-aspect', 'A', 'M'), sig('SC', 'two-aspect', 'C', 'M')],
    })
    const { state, changes } = run(layout, [
      set('T', 'reverse', 5),
      occ(layout, 'A', 10),
      occ(layout, 'M', 20),
      { type: 'interpose', block: 'A', description: '1A01', at: 30 },
      clr(layout, 'A', 40),
    ])
    expect(state.descriptions).toEqual({})
    expect(descriptions(changes).at(-1)).toMatchObject({ block: 'A', reason: 'lost', lost: '1A01' })
  })

  it('a description that stepped on normally is cleared from the old berth, not reported lost', () => {
    const layout = line(2, 'two-aspect')
    const { changes } = run(layout, [
      occ(layout, 'B0', 0),
      { type: 'interpose', block: 'B0', description: '2J01', at: 1 },
      occ(layout, 'B1', 10),
      clr(layout, 'B0', 20),
    ])
    expect(changes.some(c => c.type === 'description' && c.reason === 'lost')).toBe(false)
  })

  it('a described train that vanishes from the detectors is reported lost', () => {
    const layout = line(2, 'two-aspect')
    const { changes } = run(layout, [occ(layout, 'B1', 0), { type: 'interpose', block: 'B1', description: '5X99', at: 1 }, clr(layout, 'B1', 20)])
    expect(descriptions(changes).at(-1)).toEqual({ type: 'description', block: 'B1', description: null, reason: 'lost', lost: '5X99', at: 20 })
  })

  it('refuses a description longer than 16 characters', () => {
    const layout = line(1, 'two-aspect')
    const r = applyEvent(layout, initialState(layout), { type: 'interpose', block: 'B1', description: 'x'.repeat(17), at: 1 })
    expect(r.changes[0]).toMatchObject({ type: 'error', code: 'invalid-event', path: 'description' })
  })
})

describe('scale speed readings', () => {
  it('measured for a described train from entering a block to entering the next', () => {
    // 1000 mm in 5 s at OO 1:76.2 is 54.86 km/h, 34.09 mph (computed: 0.2 m/s x 76.2 x 3.6; / 1.609344)
    const layout = line(3, 'three-aspect')
    const { changes } = run(layout, [
      occ(layout, 'B0', 0),
      { type: 'interpose', block: 'B0', description: '1F42', at: 0 },
      occ(layout, 'B1', 10_000),
      clr(layout, 'B0', 11_000),
      occ(layout, 'B2', 15_000),
    ])
    const speeds = changes.filter(c => c.type === 'speed')
    expect(speeds.map(c => c.type === 'speed' && [c.block, c.description, c.seconds])).toEqual([
      ['B0', '1F42', 10],
      ['B1', '1F42', 5],
    ])
    const last = speeds[1]!
    if (last.type !== 'speed') throw new Error('speed expected')
    expect(last.kmh).toBeCloseTo(54.86, 2)
    expect(last.mph).toBeCloseTo(34.09, 2)
  })
  it('not measured for an undescribed train', () => {
    const layout = line(2, 'three-aspect')
    const { changes } = run(layout, [occ(layout, 'B0', 0), occ(layout, 'B1', 5000), occ(layout, 'B2', 9000)])
    expect(changes.filter(c => c.type === 'speed')).toEqual([])
  })
})

describe('detectors and occupancy', () => {
  it('a block with two detectors is occupied while either reports occupied', () => {
    const layout = layoutOf({
      blocks: [block('A'), { id: 'B', name: 'B', lengthMm: 1200, detectors: ['D1', 'D2'] }],
      links: links('A>B'),
      signals: [sig('S', 'two-aspect', 'A', 'B')],
    })
    const ev = (detector: string, occupied: boolean): LayoutEvent => ({ type: 'detector', detector, occupied, at: 1 })
    const blockChanges = (c: Change[]) => c.filter(x => x.type === 'block').map(x => x.type === 'block' && x.occupied)
    let s = initialState(layout)
    const steps: [LayoutEvent, boolean, (boolean | string)[]][] = [
      [ev('D1', true), true, [true]],
      [ev('D2', true), true, []],
      [ev('D1', false), true, []],
      [ev('D2', false), false, [false]],
    ]
    for (const [e, occupied, changed] of steps) {
      const r = applyEvent(layout, s, e)
      s = r.state
      expect(s.occupied.B).toBe(occupied)
      expect(blockChanges(r.changes)).toEqual(changed)
      expect(ind(layout, s).S!.aspect).toBe(occupied ? 'danger' : 'proceed')
    }
  })

  it('a repeated detector report changes nothing and returns the same state', () => {
    const layout = line(1, 'two-aspect')
    const s = withOccupied(layout, ['B1'])
    const r = applyEvent(layout, s, occ(layout, 'B1'))
    expect(r.changes).toEqual([])
    expect(r.state).toBe(s)
  })

  it('turnout revisions rise with each change of position', () => {
    const layout = facingJunction()
    const { state, changes } = run(layout, [set('T', 'normal'), set('T', 'normal'), set('T', 'reverse'), set('T', 'unknown')])
    expect(state.turnoutRevisions.T).toBe(3)
    expect(changes.filter(c => c.type === 'turnout').length).toBe(3)
  })
})

describe('events naming unknown ids or malformed', () => {
  const layout = line(2, 'three-aspect')
  const rows: [string, unknown, string, string][] = [
    ['detector', { type: 'detector', detector: 'nope', occupied: true, at: 1 }, 'unknown-id', 'detector'],
    ['turnout', { type: 'turnout', turnout: 'nope', position: 'normal', at: 1 }, 'unknown-id', 'turnout'],
    ['signal', { type: 'override', signal: 'nope', mode: 'hold', at: 1 }, 'unknown-id', 'signal'],
    ['block', { type: 'interpose', block: 'nope', description: '1A00', at: 1 }, 'unknown-id', 'block'],
    ['prototype name', { type: 'detector', detector: 'constructor', occupied: true, at: 1 }, 'unknown-id', 'detector'],
    ['no time', { type: 'detector', detector: 'dB1', occupied: true }, 'invalid-event', 'at'],
    ['occupied not boolean', { type: 'detector', detector: 'dB1', occupied: 1, at: 1 }, 'invalid-event', 'occupied'],
    ['bad position', { type: 'turnout', turnout: 'T', position: 'left', at: 1 }, 'invalid-event', 'position'],
    ['bad mode', { type: 'override', signal: 'S1', mode: 'green', at: 1 }, 'invalid-event', 'mode'],
    ['bad type', { type: 'reboot', at: 1 }, 'invalid-event', 'type'],
    ['not an object', null, 'invalid-event', ''],
  ]
  it.each(rows)('%s: one error change, state returned as it was', (_n, event, code, path) => {
    const s = withOccupied(layout, ['B1'])
    const r = applyEvent(layout, s, event as LayoutEvent)
    expect(r.changes).toHaveLength(1)
    expect(r.changes[0]).toMatchObject({ type: 'error', code, path })
    expect(r.state).toBe(s)
  })
})

describe('computeIndications', () => {
  it('agrees with the indication changes the events reported', () => {
    const layout = facingJunction(false)
    const { state, changes } = run(layout, [set('T', 'reverse'), occ(layout, 'B5d'), mode('S2', 'clear'), occ(layout, 'B1')])
    const shown = computeIndications(layout, initialState(layout))
    for (const c of changes) if (c.type === 'indication') shown[c.signal] = c.indication
    expect(computeIndications(layout, state)).toEqual(shown)
    expect(aspects(layout, state)).toBe('G Y G R')
    // S2 is cleared: it shows proceed where the line gives preliminary caution
    expect(ind(layout, state).S2!.exceedsLine).toBe(true)
  })
})
