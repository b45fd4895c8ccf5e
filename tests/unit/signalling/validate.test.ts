// validateLayout: every mistake in a layout definition is reported with the path of the offending value.
import { describe, expect, it } from 'vitest'
import { validateLayout } from '#shared/signalling'
import { block } from './build'

/** A valid base: A > B > C with a facing turnout in B (to C or D), a signal at A>B, one area. */
function base(): Record<string, any> {
  return {
    schema: 1,
    name: 'base',
    scale: { name: 'OO', ratio: 76.2 },
    blocks: [block('A'), block('B'), block('C'), block('D')],
    links: [
      { from: 'A', to: 'B' },
      { from: 'B', to: 'C' },
      { from: 'B', to: 'D' },
    ],
    turnouts: [{ id: 'T', block: 'B', normal: 'C', reverse: 'D' }],
    signals: [{ id: 'S', name: 'S', kind: 'three-aspect', from: 'A', protects: 'B', indicators: { D: '1' } }],
    areas: [{ id: 'x', name: 'X', signals: ['S'], turnouts: ['T'] }],
    diagram: {
      width: 400,
      height: 200,
      blocks: { A: { path: [[0, 10], [100, 10]] } },
      signals: { S: { at: [95, 0], facing: 'right' } },
      turnouts: { T: { at: [150, 10] } },
    },
  }
}

const errorsOf = (def: unknown) => {
  const r = validateLayout(def)
  return r.ok ? [] : r.errors
}

describe('validateLayout', () => {
  it('accepts the base layout and fills in defaults', () => {
    const r = validateLayout(base())
    expect(r.ok).toBe(true)
    const minimal = validateLayout({ schema: 1, name: 'm', scale: { name: 'N', ratio: 160 }, blocks: [block('A')], links: [] })
    expect(minimal.ok && minimal.layout.diagram).toEqual({ width: 1280, height: 800, blocks: {}, signals: {}, turnouts: {}, labels: [] })
  })

  const rows: [string, (d: Record<string, any>) => void, { path: string, message: RegExp }][] = [
    ['wrong schema number', d => (d.schema = 2), { path: 'schema', message: /schema must be 1/ }],
    ['negative length', d => (d.blocks[1].lengthMm = -5), { path: 'blocks[1].lengthMm', message: /positive/ }],
    ['id with a slash', d => (d.blocks[0].id = 'A/1'), { path: 'blocks[0].id', message: /an id is/ }],
    ['bad signal kind', d => (d.signals[0].kind = 'five-aspect'), { path: 'signals[0].kind', message: /./ }],
    ['duplicate block id', d => d.blocks.push(block('A')), { path: 'blocks[4].id', message: /duplicate block id "A" \(also blocks\[0\]\)/ }],
    [
      'duplicate signal id',
      d => d.signals.push({ ...d.signals[0], from: 'B', protects: 'C', indicators: undefined }),
      { path: 'signals[1].id', message: /duplicate signal id "S"/ },
    ],
    ['link to an unknown block', d => d.links.push({ from: 'C', to: 'Z' }), { path: 'links[3].to', message: /unknown block "Z"/ }],
    ['link to itself', d => d.links.push({ from: 'C', to: 'C' }), { path: 'links[3]', message: /to itself/ }],
    ['duplicate link', d => d.links.push({ from: 'A', to: 'B' }), { path: 'links[3]', message: /duplicate link "A" -> "B"/ }],
    ['signal from an unknown block', d => (d.signals[0].from = 'Q'), { path: 'signals[0].from', message: /unknown block "Q"/ }],
    [
      'signal whose from -> protects is not a link',
      d => (d.signals[0].protects = 'C'),
      { path: 'signals[0].protects', message: /"A" -> "C" is not a link/ },
    ],
    [
      'two stop signals at one place',
      d => d.signals.push({ id: 'S2', name: 'S2', kind: 'two-aspect', from: 'A', protects: 'B' }),
      { path: 'signals[1]', message: /signals\[0\] already stands at the exit of "A"/ },
    ],
    ['turnout in an unknown block', d => (d.turnouts[0].block = 'Q'), { path: 'turnouts[0].block', message: /unknown block "Q"/ }],
    [
      'turnout leg that is not a link of its block',
      (d) => {
        d.turnouts[0].reverse = 'A2'
        d.blocks.push(block('A2'))
      },
      { path: 'turnouts[0].reverse', message: /"A2" is not linked to the turnout's block "B"/ },
    ],
    ['turnout legs the same', d => (d.turnouts[0].reverse = 'C'), { path: 'turnouts[0].reverse', message: /same block/ }],
    [
      'unresolved fork',
      (d) => {
        d.turnouts = []
        d.areas[0].turnouts = []
        d.diagram.turnouts = {}
      },
      { path: 'blocks[1]', message: /block "B" forks to "C" and "D" for a train arriving from "A" with no turnout/ },
    ],
    [
      'more than two ways on',
      d => d.blocks.push(block('E')) && d.links.push({ from: 'B', to: 'E' }),
      { path: 'blocks[1]', message: /block "B" has 3 ways on \(C, D, E\).*at most two/ },
    ],
    [
      'unresolved merge',
      d => d.blocks.push(block('E')) && d.links.push({ from: 'E', to: 'C' }),
      { path: 'blocks[2]', message: /trains from "B" and "E" merge in block "C" with no turnout/ },
    ],
    [
      'detector used by two blocks',
      d => (d.blocks[2].detectors = ['dA']),
      { path: 'blocks[2].detectors[0]', message: /detector "dA" is already used by block "A"/ },
    ],
    [
      'junction indicator on a leg that is not a facing leg of the route',
      d => (d.signals[0].indicators = { A: '1' }),
      { path: 'signals[0].indicators.A', message: /not a leg of a facing turnout on this signal's routes/ },
    ],
    ['area naming an unknown signal', d => d.areas[0].signals.push('S9'), { path: 'areas[0].signals[1]', message: /unknown signal "S9"/ }],
    ['area naming an unknown turnout', d => d.areas[0].turnouts.push('T9'), { path: 'areas[0].turnouts[1]', message: /unknown turnout "T9"/ }],
    [
      'signal in two areas',
      d => d.areas.push({ id: 'y', name: 'Y', signals: ['S'], turnouts: [] }),
      { path: 'areas[1].signals[0]', message: /already in area "x"/ },
    ],
    [
      'diagram entry for an unknown block',
      d => (d.diagram.blocks.Z = { path: [[0, 0], [1, 1]] }),
      { path: 'diagram.blocks.Z', message: /unknown block "Z"/ },
    ],
    [
      'diagram entry for an unknown signal',
      d => (d.diagram.signals.S9 = { at: [1, 1], facing: 'left' }),
      { path: 'diagram.signals.S9', message: /unknown signal "S9"/ },
    ],
    [
      'diagram entry for an unknown turnout',
      d => (d.diagram.turnouts.T9 = { at: [1, 1] }),
      { path: 'diagram.turnouts.T9', message: /unknown turnout "T9"/ },
    ],
    [
      'diagram point outside the drawing',
      d => (d.diagram.blocks.A.path[1] = [500, 10]),
      { path: 'diagram.blocks.A.path[1]', message: /outside the 400 x 200 drawing/ },
    ],
    ['diagram path of one point', d => (d.diagram.blocks.A.path = [[0, 0]]), { path: 'diagram.blocks.A.path', message: /at least two points/ }],
  ]
  it.each(rows)('%s', (_name, edit, want) => {
    const d = base()
    edit(d)
    const errors = errorsOf(d)
    expect(errors.length).toBeGreaterThan(0)
    expect(errors).toContainEqual({ path: want.path, message: expect.stringMatching(want.message) })
  })

  it('accepts a single line worked both ways, and a branch whose two connections meet in one block', () => {
    // X <-> Y <-> Z worked both ways; Z is entered from P or from Y, and left towards Y or Q
    const def = {
      schema: 1,
      name: 'single line',
      scale: { name: 'OO', ratio: 76.2 },
      blocks: ['X', 'Y', 'Z', 'P', 'Q'].map(b => block(b)),
      links: [
        { from: 'X', to: 'Y' },
        { from: 'Y', to: 'X' },
        { from: 'Y', to: 'Z' },
        { from: 'Z', to: 'Y' },
        { from: 'P', to: 'Z' },
        { from: 'Z', to: 'Q' },
      ],
      turnouts: [{ id: 'T', block: 'Z', normal: 'P', reverse: 'Q' }],
    }
    expect(errorsOf(def)).toEqual([])
    // without the turnout, a train from Y could go to Q, and one from P to Y: trains merge and fork unchecked
    expect(errorsOf({ ...def, turnouts: [] }).map(e => e.path)).toEqual(['blocks[2]', 'blocks[2]'])
  })

  it('reports several mistakes at once', () => {
    const d = base()
    d.links.push({ from: 'C', to: 'Z' })
    d.areas[0].signals.push('S9')
    expect(errorsOf(d).map(e => e.path)).toEqual(['links[3].to', 'areas[0].signals[1]'])
  })
})

describe('decoder table', () => {
  // DCC decoder addresses 1-10239 (NMRA S-9.2.1, from memory); RailCom detectors report them (NMRA S-9.3.2)
  const base = { schema: 1, name: 'd', scale: { name: 'OO', ratio: 76.2 }, blocks: [{ id: 'B', name: 'B', lengthMm: 1000, detectors: ['dB'] }], links: [] }
  it('accepts addresses 1 to 10239 with headcode-like descriptions, one description per address', () => {
    expect(validateLayout({ ...base, decoders: [{ address: 1, description: '1F42' }, { address: 10239, description: '2J01' }] }).ok).toBe(true)
    const r = validateLayout({ ...base, decoders: [{ address: 3, description: '1F42' }, { address: 3, description: '2J01' }, { address: 10240, description: 'x' }] })
    expect(r.ok).toBe(false)
    if (r.ok) return
    expect(r.errors.map(e => `${e.path}: ${e.message}`)).toEqual(expect.arrayContaining([
      'decoders[2].address: a decoder address is 1 to 10239',
      expect.stringMatching(/^decoders\[2\]\.description: /),
    ]))
  })
  it('names the second entry of a repeated address', () => {
    const r = validateLayout({ ...base, decoders: [{ address: 3, description: '1F42' }, { address: 3, description: '2J01' }] })
    expect(r.ok ? [] : r.errors).toEqual([{ path: 'decoders[1].address', message: 'address 3 is already listed at decoders[0]' }])
  })
})
