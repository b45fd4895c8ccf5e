// Drawing helpers checked against the demo layout's own drawing data (shared/layouts/demo-layout.json).
import { describe, expect, it } from 'vitest'
import { blockAreaIndex, contentBounds, diagramMarks, diagramTiles, endBarsPath, markDistance, markScale, nearestBlock, nearestMark, signalLabelDirections, turnoutLegs, turnoutTagDirections, turnoutTagSide, MARK, type Mark } from '#shared/live/diagram'
import { demoLayout } from '../../support/live-fixtures'
import { benchLayout } from '../../../scripts/lib/bench-layout'

const def = demoLayout()
const direction = (leg: [[number, number], [number, number]]) => {
  const dx = leg[1][0] - leg[0][0]
  const dy = leg[1][1] - leg[0][1]
  const len = Math.hypot(dx, dy)
  return [Math.round((dx / len) * 100) / 100, Math.round((dy / len) * 100) / 100]
}

describe('turnoutLegs', () => {
  it('points each leg of T1 from its point along the block it leads to', () => {
    // T1 at (960,200) in DM2: normal DM3 lies to the left along the down main, reverse JD runs to (760,400)
    const legs = turnoutLegs(def, 'T1')!
    expect(legs.normal[0]).toEqual([960, 200])
    expect(direction(legs.normal)).toEqual([-1, 0])
    expect(direction(legs.reverse)).toEqual([-0.71, 0.71])
  })

  it('gives every demo turnout two legs of the same length in different directions', () => {
    for (const t of def.turnouts) {
      const legs = turnoutLegs(def, t.id)!
      expect(direction(legs.normal)).not.toEqual(direction(legs.reverse))
      expect(Math.hypot(legs.normal[1][0] - legs.normal[0][0], legs.normal[1][1] - legs.normal[0][1])).toBeCloseTo(34, 6)
    }
  })
})

describe('contentBounds', () => {
  it('is the drawn part plus a margin, inside the drawing area', () => {
    // demo drawing: x from 80 (up main) to 1220 (up departure), y from 56 (station labels) to 768 (SF2);
    // the bottom margin stops at the drawing's height of 800
    expect(contentBounds(def, 40)).toEqual({ x: 40, y: 16, width: 1260 - 40, height: 800 - 16 })
  })
})

describe('blockAreaIndex', () => {
  it('puts a block under the first area with a signal into it or a turnout in it, fiddle roads under none', () => {
    const index = blockAreaIndex(def)
    expect(index.UM4).toBe(0) // SU3 and T4, Main line
    expect(index.UM2).toBe(1) // SU1, Branch & station
    expect(index.DM4).toBe(0) // T6 (Main line) comes before SD3 (Branch & station)
    expect(index.FY1).toBeUndefined()
  })
})

describe('markScale', () => {
  it('draws marks at screen size when the drawing is fitted small, never smaller than drawn, and caps the growth', () => {
    expect(markScale(0.5)).toBe(2)
    expect(markScale(2)).toBe(1)
    expect(markScale(0.1)).toBe(2.4)
    // a lamp keeps at least 24 screen px across at the tablet sizes' fitted zoom (about 0.45 to 0.75)
    for (const scale of [0.45, 0.57, 0.75]) expect(2 * MARK.lamp * markScale(scale) * scale).toBeGreaterThanOrEqual(24)
  })
})

describe('nearestMark', () => {
  const marks: Mark[] = [
    { key: 'signal:A', at: [100, 100], r: 20 },
    { key: 'turnout:T', at: [140, 100], r: 15 },
    { key: 'block:B', box: { x: 200, y: 90, width: 60, height: 20 } },
  ]
  it('picks the mark whose shape is nearest the tap, not the one drawn last', () => {
    expect(nearestMark(marks, [128, 100], 10)).toBe('turnout:T')
    expect(nearestMark(marks, [112, 100], 10)).toBe('signal:A')
    expect(nearestMark(marks, [240, 95], 10)).toBe('block:B')
    expect(nearestMark([...marks].reverse(), [128, 100], 10)).toBe('turnout:T')
  })
  it('picks nothing beyond the reach of every mark', () => {
    expect(nearestMark(marks, [100, 200], 10)).toBeNull()
    expect(markDistance(marks[2]!, [190, 100])).toBe(10)
  })
})

describe('the demo drawing at the fitted zoom of a tablet', () => {
  // marks at the tablet sizes' smallest fitted zoom, in drawing units
  const k = markScale(0.55)
  const tagOf = (id: string) => {
    const at = def.diagram.turnouts[id]!.at
    return [at[0], at[1] + turnoutTagSide(at, turnoutLegs(def, id)!) * MARK.tagOffset * k] as [number, number]
  }
  it('keeps every turnout tag clear of every signal lamp, so a tap on one cannot land on the other', () => {
    for (const t of def.turnouts) {
      const tag = tagOf(t.id)
      for (const [s, { at }] of Object.entries(def.diagram.signals)) {
        expect(Math.hypot(tag[0] - at[0], tag[1] - at[1]), `${t.id} and ${s}`).toBeGreaterThan((MARK.tag + MARK.lamp) * k)
      }
    }
  })
  it('keeps the signal lamps apart from each other', () => {
    const all = Object.entries(def.diagram.signals)
    for (const [a, sa] of all) {
      for (const [b, sb] of all) {
        if (a < b) expect(Math.hypot(sa.at[0] - sb.at[0], sa.at[1] - sb.at[1]), `${a} and ${b}`).toBeGreaterThan(2 * MARK.lamp * k)
      }
    }
  })
  it('writes each signal id on the side of its lamp away from the track', () => {
    const dirs = signalLabelDirections(def)
    expect(dirs.SU1).toEqual([0, -1]) // above the up main
    expect(dirs.SD2).toEqual([0, 1]) // below the down main
    // SF2 stands below the lowest fiddle road, near the drawing's bottom edge: its id goes beside it instead
    const sf2 = dirs.SF2!
    expect(def.diagram.signals.SF2!.at[1] + sf2[1] * 40).toBeLessThan(def.diagram.height - 16)
    for (const v of Object.values(dirs)) expect(Math.hypot(v[0], v[1])).toBeCloseTo(1, 1)
  })
})

describe('signalLabelDirections on a large drawing', () => {
  // The function as it was before its grid index (every signal against every segment of the layout), kept here
  // as the reference: the index must not change any answer.
  function plain(def: ReturnType<typeof demoLayout>, reach = 40, clearance = 16): Record<string, [number, number]> {
    const seg = (p: [number, number], a: [number, number], b: [number, number]) => {
      const dx = b[0] - a[0]
      const dy = b[1] - a[1]
      const len2 = dx * dx + dy * dy
      const t = len2 === 0 ? 0 : Math.min(1, Math.max(0, ((p[0] - a[0]) * dx + (p[1] - a[1]) * dy) / len2))
      return { d: Math.hypot(p[0] - (a[0] + t * dx), p[1] - (a[1] + t * dy)), foot: [a[0] + t * dx, a[1] + t * dy] as [number, number] }
    }
    const facing: Record<string, [number, number]> = { left: [-1, 0], right: [1, 0], up: [0, -1], down: [0, 1] }
    const segments = Object.values(def.diagram.blocks).flatMap(b => b.path.slice(1).map((p, i) => [b.path[i]!, p] as [[number, number], [number, number]]))
    const compass: [number, number][] = [[-1, 0], [1, 0], [-0.71, -0.71], [0.71, -0.71], [-0.71, 0.71], [0.71, 0.71], [0, -1], [0, 1]]
    const out: Record<string, [number, number]> = {}
    for (const [id, s] of Object.entries(def.diagram.signals)) {
      const r = reach * 2
      const local = segments.filter(([a, b]) => s.at[0] >= Math.min(a[0], b[0]) - r && s.at[0] <= Math.max(a[0], b[0]) + r && s.at[1] >= Math.min(a[1], b[1]) - r && s.at[1] <= Math.max(a[1], b[1]) + r)
      let away: [number, number] = [0, -1]
      let best = Infinity
      for (const [a, b] of local) {
        const { d, foot } = seg(s.at, a, b)
        if (d >= best) continue
        best = d
        const len = Math.hypot(s.at[0] - foot[0], s.at[1] - foot[1])
        const v = facing[s.facing] ?? [1, 0]
        away = len > 0.5 ? [(s.at[0] - foot[0]) / len, (s.at[1] - foot[1]) / len] : [v[1], -v[0]]
      }
      let chosen = away
      let chosenGap = -1
      for (const c of [away, ...compass]) {
        const p: [number, number] = [s.at[0] + c[0] * reach, s.at[1] + c[1] * reach]
        const g = Math.min(...local.map(([a, b]) => seg(p, a, b).d), Math.min(p[0], p[1], def.diagram.width - p[0], def.diagram.height - p[1]))
        if (g >= clearance) { chosen = c; break }
        if (g > chosenGap) { chosen = c; chosenGap = g }
      }
      out[id] = chosen
    }
    return out
  }
  it('gives every signal of the demo, moved about and scaled up, the direction the plain rule gives', () => {
    const def = demoLayout()
    for (const [factor, shift] of [[1, 0], [3, 7], [0.5, -13]] as const) {
      const d = structuredClone(def)
      for (const b of Object.values(d.diagram.blocks)) b.path = b.path.map(([x, y]) => [x * factor + shift, y * factor - shift])
      for (const s of Object.values(d.diagram.signals)) s.at = [s.at[0] * factor + shift, s.at[1] * factor - shift]
      d.diagram.width *= factor
      d.diagram.height *= factor
      expect(signalLabelDirections(d)).toEqual(plain(d))
    }
  })
  it('gives the 500 signals of the generated benchmark line the directions the plain rule gives', () => {
    const bench = benchLayout()
    expect(signalLabelDirections(bench)).toEqual(plain(bench))
  })
})

describe('tap areas on the demo drawing', () => {
  // 0.57-0.61 screen px per drawing unit: the fitted zoom of the demo drawing at 1024x768 and 768x1024
  // (measured in the browser test). Boxes that do not overlap give each item its own 44 x 44 px.
  it.each([0.57, 0.59, 0.61])('gives every signal, turnout and berth a tap box no other item\'s box overlaps, at zoom %s', (scale) => {
    const def = demoLayout()
    const k = markScale(scale)
    const labelDirs = signalLabelDirections(def)
    const marks = diagramMarks(def, k, labelDirs, turnoutTagDirections(def, k, labelDirs), () => null)
    const boxes = marks.flatMap(m => 'box' in m ? [{ key: m.key, ...m.box }] : [])
    const overlaps: string[] = []
    // each item has a box of 44 x 44 px or more (a signal's id adds a smaller one, round the text)
    for (const key of new Set(boxes.map(b => b.key))) {
      expect(Math.max(...boxes.filter(b => b.key === key).map(b => Math.min(b.width, b.height) * scale)), key).toBeGreaterThanOrEqual(44 - 1e-9)
    }
    for (const a of boxes) {
      for (const b of boxes) {
        if (a.key >= b.key) continue
        const ox = Math.min(a.x + a.width, b.x + b.width) - Math.max(a.x, b.x)
        const oy = Math.min(a.y + a.height, b.y + b.height) - Math.max(a.y, b.y)
        if (ox > 0 && oy > 0) overlaps.push(`${a.key} and ${b.key}: ${(ox * scale).toFixed(0)} x ${(oy * scale).toFixed(0)} px`)
      }
    }
    expect(overlaps).toEqual([])
  })
})

describe('nearestBlock', () => {
  it('finds the block whose drawn track runs nearest, within the reach', () => {
    // UM2 runs straight from (360,120) to (640,120); UM1 ends at (360,120) after a bend down the left side
    expect(nearestBlock(def, [500, 126], 20)).toBe('UM2')
    expect(nearestBlock(def, [84, 400], 20)).toBe('UM1') // beside UM1's vertical stretch x = 80
    expect(nearestBlock(def, [500, 160], 20)).toBe(null) // 40 units away: out of reach
  })
})

describe('endBarsPath', () => {
  it('draws a bar square to the track across each end, centred on the end point', () => {
    // worked by hand: a level track from (100,50) to (200,50) has upright bars of 18 units at x = 100 and 200
    expect(endBarsPath([[100, 50], [200, 50]])).toBe('M100 59L100 41M200 41L200 59')
    // an upright track from (10,0) down to (10,40) bent to (30,40): the bars lie level at (10,0) and upright at (30,40)
    expect(endBarsPath([[10, 0], [10, 40], [30, 40]], 10)).toBe('M5 0L15 0M30 35L30 45')
    // on a 3-4-5 diagonal from (0,0) to (30,40) the bar's direction is (-4,3)/5, half of 10 units each way
    expect(endBarsPath([[0, 0], [30, 40]], 10)).toBe('M-4 3L4 -3M34 37L26 43')
    expect(endBarsPath([[1, 1]])).toBe('')
  })
})

describe('diagramTiles', () => {
  it('cuts the 500-block bench drawing into a 6 x 6 grid and files each block by the middle of its track', () => {
    const bench = benchLayout()
    const grid = diagramTiles(bench)
    // sqrt(500 / 16) = 5.6, rounded to 6 tiles a side
    expect(grid.count).toBe(36)
    const used = new Set(Object.keys(bench.diagram.blocks).map(grid.blockTile))
    expect(used.size).toBe(36)
    // B000 is the first block of the top row, on the left: tile 0; B499 the last of the bottom row, also on the left
    expect(grid.blockTile('B000')).toBe(0)
    expect(grid.blockTile('B499')).toBe(30)
    const b = contentBounds(bench, 0)
    expect(grid.tileOf([b.x + b.width, b.y + b.height])).toBe(35)
    expect(grid.tileOf([b.x - 500, b.y - 500])).toBe(0)
  })

  it('keeps a small layout like the demo in one tile per kind of mark', () => {
    // the demo has fewer than 24 blocks (sqrt(n / 16) rounds to 1)
    expect(Object.keys(def.diagram.blocks).length).toBeLessThan(24)
    expect(diagramTiles(def).count).toBe(1)
  })
})
