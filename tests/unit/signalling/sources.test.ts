// Checks of the signalling engine and scale speed against outside sources. Each check names its source.
// Aspects are written R (danger), Y (caution), YY (preliminary caution), G (proceed).
import { describe, expect, it } from 'vitest'
import { SCALES, scaleSpeed, initialState } from '#shared/signalling'
import { alarmsOf, aspects, block, clr, ind, line, mode, occ, run, set, valid, withOccupied } from './build'

describe('British multiple-aspect sequences', () => {
  // Network Rail Safety Central, Jargon Buster "Four aspect signal": red = next section contains a train;
  // single yellow = next section clear, train in the following one; double yellow = next two sections clear,
  // train in the one beyond; green = next three sections clear. RSSB RS521 §2.2 gives the same sequence.
  // The three- and two-aspect columns drop aspects from the four-aspect sequence: from memory.
  const table: { clear: number, four: string, three: string, two: string }[] = [
    { clear: 0, four: 'R', three: 'R', two: 'R' },
    { clear: 1, four: 'Y', three: 'Y', two: 'G' },
    { clear: 2, four: 'YY', three: 'G', two: 'G' },
    { clear: 3, four: 'G', three: 'G', two: 'G' },
    { clear: 4, four: 'G', three: 'G', two: 'G' },
  ]
  it.each(table)('$clear clear sections ahead: four-aspect $four, three-aspect $three, two-aspect $two', ({ clear, four, three, two }) => {
    // a train stands in B5; signal S(5 - clear) has `clear` clear sections before it
    const signal = `S${5 - clear}`
    for (const [kind, want] of [['four-aspect', four], ['three-aspect', three], ['two-aspect', two]] as const) {
      const layout = line(5, kind)
      const state = withOccupied(layout, ['B5'])
      expect(aspects(layout, state, [signal]), kind).toBe(want)
    }
  })

  it('a held signal reads as danger to the signal in rear (RSSB RS521 §1.1, replacement of automatic signals)', () => {
    const layout = line(4, 'four-aspect')
    const { state } = run(layout, [mode('S3', 'hold')])
    expect(aspects(layout, state)).toBe('YY Y R G')
  })
})

describe('Derived scenarios: sections B1..B6, traffic left to right, Sk protects Bk', () => {
  // The recursive rule (RSSB RS521 §2.1, §2.2 sequences; Network Rail jargon buster "Four aspect signal"):
  // R if own section occupied or held; else Y if next is R; else (four-aspect) YY if next is Y; else G.
  it('S1: one train in B5, open exit', () => {
    expect(aspects(line(6, 'three-aspect'), withOccupied(line(6, 'three-aspect'), ['B5']))).toBe('G G G Y R G')
    const four = line(6, 'four-aspect')
    expect(aspects(four, withOccupied(four, ['B5']))).toBe('G G YY Y R G')
    const two = line(6, 'two-aspect')
    expect(aspects(two, withOccupied(two, ['B5']))).toBe('G G G G R G')
    // the train moves on into B6: S6 showed G, so no signal was passed at danger
    const { changes } = run(four, [occ(four, 'B6')], withOccupied(four, ['B5']))
    expect(alarmsOf(changes)).toEqual([])
  })

  it('S2: two trains, in B2 and B6; the rear one runs up behind the front one without a SPAD', () => {
    for (const [kind, before, after] of [
      ['three-aspect', 'Y R G G Y R', 'G G G Y R R'],
      ['four-aspect', 'Y R G YY Y R', 'G G YY Y R R'],
    ] as const) {
      const layout = line(6, kind)
      const start = withOccupied(layout, ['B2', 'B6'])
      expect(aspects(layout, start), kind).toBe(before)
      const steps = [occ(layout, 'B3'), clr(layout, 'B2'), occ(layout, 'B4'), clr(layout, 'B3'), occ(layout, 'B5'), clr(layout, 'B4')]
      const { state, changes } = run(layout, steps, start)
      expect(alarmsOf(changes), kind).toEqual([])
      expect(aspects(layout, state), kind).toBe(after)
    }
  })

  it('S3: terminal end at a buffer stop (end of line read as danger ahead)', () => {
    // An end of authority is preceded by cautionary aspects (railsigns.uk "Aspect sequences");
    // reading the buffer stop as danger is Blockbell's end-of-line default.
    const three = line(6, 'three-aspect', 'buffer')
    expect(aspects(three, initialState(three))).toBe('G G G G G Y')
    expect(aspects(three, withOccupied(three, ['B6']))).toBe('G G G G Y R')
    const four = line(6, 'four-aspect', 'buffer')
    expect(aspects(four, initialState(four))).toBe('G G G G YY Y')
    expect(aspects(four, withOccupied(four, ['B6']))).toBe('G G G YY Y R')
  })

  it('S4: hold at S4, then a train passes it: one SPAD alarm at S4; the hold stays', () => {
    // RSSB RS521 §1.1: an automatic signal can be placed to danger by the signaller.
    // GERT8000 module S5: passing a signal at danger without authority.
    for (const [kind, afterE2, afterE4] of [
      ['three-aspect', 'G Y R R G G', 'G G Y R G G'],
      ['four-aspect', 'YY Y R R G G', 'G YY Y R G G'],
    ] as const) {
      const layout = line(6, kind)
      const start = run(layout, [mode('S4', 'hold'), occ(layout, 'B2')]).state
      expect(aspects(layout, start), kind).toBe('Y R Y R G G')
      const e1 = run(layout, [occ(layout, 'B3')], start)
      expect(alarmsOf(e1.changes)).toEqual([])
      const e2 = run(layout, [clr(layout, 'B2')], e1.state)
      expect(aspects(layout, e2.state), kind).toBe(afterE2)
      const e3 = run(layout, [occ(layout, 'B4')], e2.state)
      const raised = alarmsOf(e3.changes)
      expect(raised).toHaveLength(1)
      expect(raised[0]).toMatchObject({ kind: 'spad', signal: 'S4', block: 'B4', acknowledgedAt: null })
      const e4 = run(layout, [clr(layout, 'B3')], e3.state)
      expect(aspects(layout, e4.state), kind).toBe(afterE4)
      expect(e4.state.overrides.S4).toBe('hold')
      const back = run(layout, [mode('S4', 'auto')], e4.state)
      expect(aspects(layout, back.state, ['S4'])).toBe('R')
    }
  })
})

/** S6: B1, B2, B3 with a facing turnout T in B3 (junction signal S3); main B4m, B5m; branch B4d, B5d. */
function junction(kind: 'three-aspect' | 'four-aspect') {
  const ids = ['B0', 'B1', 'B2', 'B3', 'B4m', 'B5m', 'B4d', 'B5d']
  const links = [
    ['B0', 'B1'],
    ['B1', 'B2'],
    ['B2', 'B3'],
    ['B3', 'B4m'],
    ['B4m', 'B5m'],
    ['B3', 'B4d'],
    ['B4d', 'B5d'],
  ].map(([from, to]) => ({ from: from!, to: to! }))
  const sig = (id: string, from: string, protects: string, extra = {}) => ({ id, name: id, kind, from, protects, ...extra })
  return valid({
    schema: 1,
    name: 'junction',
    scale: { name: 'OO', ratio: 76.2 },
    blocks: ids.map(id => block(id)),
    links,
    turnouts: [{ id: 'T', block: 'B3', normal: 'B4m', reverse: 'B4d' }],
    signals: [
      sig('S1', 'B0', 'B1'),
      sig('S2', 'B1', 'B2'),
      sig('S3', 'B2', 'B3', { indicators: { B4d: '1' } }),
      sig('S4m', 'B3', 'B4m'),
      sig('S5m', 'B4m', 'B5m', { endOfLine: 'clear-ahead' }),
      sig('S4d', 'B3', 'B4d'),
      sig('S5d', 'B4d', 'B5d', { endOfLine: 'clear-ahead' }),
    ],
  })
}

describe('Junction indicators', () => {
  it('S6a: turnout normal, no trains: every signal proceed, junction indicator off', () => {
    for (const kind of ['three-aspect', 'four-aspect'] as const) {
      const layout = junction(kind)
      const { state } = run(layout, [set('T', 'normal')])
      expect(aspects(layout, state)).toBe('G G G G G G G')
      expect(ind(layout, state).S3!.indicator).toBeNull()
    }
  })

  it('lit with its position when the route takes the diverging leg, only with a proceed aspect', () => {
    // RSSB RS521 §2.3 (restated in RS521-based study cards): the junction indicator is lit only when the main
    // signal shows a proceed aspect for a diverging route; no indicator for the straight route.
    const layout = junction('four-aspect')
    const reverse = run(layout, [set('T', 'reverse')]).state
    expect(ind(layout, reverse).S3).toMatchObject({ aspect: 'proceed', indicator: '1' })
    // train on the branch in B4d: S3 reads S4d at danger -> caution, still a proceed aspect, indicator lit
    const ahead = withOccupied(layout, ['B4d'], reverse)
    expect(ind(layout, ahead).S3).toMatchObject({ aspect: 'caution', indicator: '1' })
    // train in the junction block: S3 at danger, indicator out
    const own = withOccupied(layout, ['B3'], reverse)
    expect(ind(layout, own).S3).toMatchObject({ aspect: 'danger', indicator: null })
  })
})

describe('North American three- and four-indication automatic block signals', () => {
  // Basic ABS sequence, same recursion as the British three-aspect: block occupied -> Stop and Proceed
  // (B&O/C&O 1969 rule B-291; red with number plate), block clear and next red -> Approach (49 CFR §236.803
  // "approach signal"; NORAC rule 285), otherwise Clear (NORAC rule 281). Four-indication adds Advance
  // Approach, "proceed prepared to stop at the second signal" (NORAC rule 282a). Blockbell's aspects map as:
  const names: Record<string, string> = { R: 'Stop and Proceed', Y: 'Approach', YY: 'Advance Approach', G: 'Clear' }
  it('three-indication: Clear, Clear, Approach, Stop and Proceed towards a train', () => {
    const layout = line(4, 'three-aspect')
    const got = aspects(layout, withOccupied(layout, ['B4'])).split(' ').map(a => names[a])
    expect(got).toEqual(['Clear', 'Clear', 'Approach', 'Stop and Proceed'])
  })
  it('four-indication: Clear, Advance Approach, Approach, Stop and Proceed towards a train', () => {
    const layout = line(4, 'four-aspect')
    const got = aspects(layout, withOccupied(layout, ['B4'])).split(' ').map(a => names[a])
    expect(got).toEqual(['Clear', 'Advance Approach', 'Approach', 'Stop and Proceed'])
  })
})

describe('Scale ratios', () => {
  const ratio = (name: string) => SCALES.find(s => s.name === name)?.ratio
  // NMRA Standard S-1.2 defines these scales; the ratios below are as restated by crazymodeltrains.com,
  // modeltrainshop.co.za and reginarailwaymodellers.org (the sheet's exact wording is from memory).
  it.each([
    // HO: 3.5 mm to the foot, 304.8 / 3.5 = 87.09, quoted as 1:87.1 (crazymodeltrains.com)
    ['HO', 87.1],
    // British 4 mm scale: 4 mm to the foot, 304.8 / 4 = 76.2 (modeltrainshop.co.za)
    ['OO', 76.2],
    ['N', 160],
    ['TT', 120],
    ['S', 64],
    ['O (North America)', 48],
    // British N: 2.0625 mm to the foot, about 1:148 (crazymodeltrains.com)
    ['N (UK)', 148],
    // Z: common practice
    ['Z', 220],
  ])('%s is 1:%d', (name, want) => {
    expect(ratio(name)).toBe(want)
    expect(SCALES.find(s => s.name === name)!.source.length).toBeGreaterThan(0)
  })
  it('the OO and HO ratios follow from millimetres per foot', () => {
    // 1 ft = 304.8 mm exactly (international foot)
    expect(304.8 / 4).toBeCloseTo(ratio('OO')!, 6)
    expect(304.8 / 3.5).toBeCloseTo(ratio('HO')!, 1)
  })
})

describe('Scale speed: distance / time x ratio, km/h and mph (1 mile = 1609.344 m)', () => {
  it.each([
    // SDMRC worked example: "3 / 10.4 X 3600 / 5280 X 76 = 14.9 smph" (3 ft in 10.4 s, ratio 76)
    { case: 'OO 3 ft in 10.4 s at 1:76', lengthMm: 914.4, seconds: 10.4, ratio: 76, kmh: 24.06, mph: 14.95 },
    // same run at 1:76.2 (computed)
    { case: 'OO 3 ft in 10.4 s at 1:76.2', lengthMm: 914.4, seconds: 10.4, ratio: 76.2, kmh: 24.12, mph: 14.99 },
    // rule of thumb "1 ft/s is about 60 scale mph in HO" (trains.com forum)
    { case: 'HO 1 ft in 1 s', lengthMm: 304.8, seconds: 1, ratio: 87.1, kmh: 95.57, mph: 59.39 },
    // "one inch per second = 5 HO scale mph" (trains.com forum)
    { case: 'HO 1 in in 1 s', lengthMm: 25.4, seconds: 1, ratio: 87.1, kmh: 7.96, mph: 4.95 },
    // trains.com forum example, 3 in in 15 s (they round 0.0167 ft/s to 0.02)
    { case: 'HO 3 in in 15 s', lengthMm: 76.2, seconds: 15, ratio: 87.1, kmh: 1.59, mph: 0.99 },
    // computed
    { case: 'N 1 m in 10 s at 1:160', lengthMm: 1000, seconds: 10, ratio: 160, kmh: 57.6, mph: 35.79 },
    { case: 'N 1 m in 10 s at 1:148', lengthMm: 1000, seconds: 10, ratio: 148, kmh: 53.28, mph: 33.11 },
    { case: 'OO 1 m in 5 s', lengthMm: 1000, seconds: 5, ratio: 76.2, kmh: 54.86, mph: 34.09 },
  ])('$case: $kmh km/h, $mph mph', ({ lengthMm, seconds, ratio, kmh, mph }) => {
    const v = scaleSpeed({ lengthMm, seconds, ratio })
    expect(v.kmh).toBeCloseTo(kmh, 2)
    expect(v.mph).toBeCloseTo(mph, 2)
  })

  it('refuses a zero or negative time, length or ratio', () => {
    expect(() => scaleSpeed({ lengthMm: 1000, seconds: 0, ratio: 76.2 })).toThrow(RangeError)
    expect(() => scaleSpeed({ lengthMm: -1, seconds: 1, ratio: 76.2 })).toThrow(RangeError)
    expect(() => scaleSpeed({ lengthMm: 1, seconds: 1, ratio: Number.NaN })).toThrow(RangeError)
  })
})
