import { AREA_COLOUR_NAMES, type DiagramFacingName, type Layout, type LayoutArea, type Point } from '../schemas/layout'
import type { Aspect, OverrideMode, TurnoutPosition } from '../signalling/types'
import { areaOfBlock } from './rights'

/**
 * Drawing helpers for the Panel's mimic diagram. Aspects always carry a shape as well as a colour:
 * danger a bar across the lamp, caution one dot, preliminary caution two dots, proceed an arrow in the
 * direction of travel.
 */

export type AspectCue = 'bar' | 'dot' | 'two-dots' | 'arrow'

export const ASPECT_CUE: Record<Aspect, AspectCue> = {
  'danger': 'bar',
  'caution': 'dot',
  'preliminary-caution': 'two-dots',
  'proceed': 'arrow',
}

export const ASPECT_LABEL: Record<Aspect, string> = {
  'danger': 'Danger',
  'caution': 'Caution',
  'preliminary-caution': 'Preliminary caution',
  'proceed': 'Proceed',
}

export const OVERRIDE_LABEL: Record<OverrideMode, string> = { hold: 'Hold', auto: 'Auto', clear: 'Clear' }

export const OVERRIDE_HINT: Record<OverrideMode, string> = {
  hold: 'Keep it at danger, whatever the line shows.',
  auto: 'Let the block occupancy drive it.',
  clear: 'Show proceed whenever its own section is free, whatever is ahead.',
}

export const TURNOUT_LABEL: Record<TurnoutPosition, string> = { normal: 'Normal', reverse: 'Reverse', unknown: 'Position not known' }

/** SVG polyline `points` attribute. */
export function pointsAttr(path: Point[]): string {
  return path.map(([x, y]) => `${x},${y}`).join(' ')
}

/** Unit vector of the direction of travel. */
function facingVector(facing: DiagramFacingName): Point {
  return ({ left: [-1, 0], right: [1, 0], up: [0, -1], down: [0, 1] } as const)[facing] as Point
}

/** Rotation in degrees of a shape drawn pointing right, so that it points along `facing`. */
export function facingAngle(facing: DiagramFacingName): number {
  return { right: 0, down: 90, left: 180, up: 270 }[facing]
}

/**
 * Short strokes from a turnout's point along each of its legs, to show which way it is set: the direction
 * is towards the nearest point of the leg block's drawing other than the turnout point itself.
 */
export function turnoutLegs(def: Layout, turnoutId: string, length = 34): { normal: [Point, Point], reverse: [Point, Point] } | null {
  const t = def.turnouts.find(x => x.id === turnoutId)
  const at = def.diagram.turnouts[turnoutId]?.at
  if (!t || !at) return null
  const leg = (block: string): [Point, Point] => {
    const path = def.diagram.blocks[block]?.path ?? []
    let best: Point | null = null
    let bestD = Infinity
    for (const p of path) {
      const d = Math.hypot(p[0] - at[0], p[1] - at[1])
      if (d > 1 && d < bestD) {
        best = p
        bestD = d
      }
    }
    if (!best) return [at, at]
    const k = Math.min(length, bestD) / bestD
    return [at, [at[0] + (best[0] - at[0]) * k, at[1] + (best[1] - at[1]) * k]]
  }
  return { normal: leg(t.normal), reverse: leg(t.reverse) }
}

/** Index (in `def.areas`) of the area each block is drawn under; blocks in no area are left out. */
export function blockAreaIndex(def: Layout): Record<string, number> {
  const out: Record<string, number> = {}
  for (const b of def.blocks) {
    const area = areaOfBlock(def, b.id)
    if (area) out[b.id] = def.areas.indexOf(area)
  }
  return out
}

/** The colour an area is drawn in (0..3, the theme's area-N): its own choice, else by its place in the list. */
export function areaColour(area: Pick<LayoutArea, 'colour'> | undefined, index: number): number {
  return area?.colour ?? index % AREA_COLOUR_NAMES.length
}

/** Dash patterns that tell the area bands apart without colour (solid, long dashes, short dashes, ...). */
export const AREA_DASHES = ['', '18 8', '6 6', '2 6']

export function nameOf(list: { id: string, name: string }[] | undefined, id: string): string {
  return list?.find(x => x.id === id)?.name ?? id
}

export interface Bounds { x: number, y: number, width: number, height: number }

/**
 * The part of the drawing that holds something (tracks, signals, turnouts, labels), with a margin, inside
 * the drawing area: fitting this rather than the whole drawing area makes the most of the screen.
 */
export function contentBounds(def: Layout, margin = 40): Bounds {
  const d = def.diagram
  const points: Point[] = [
    ...Object.values(d.blocks).flatMap(b => b.path),
    ...Object.values(d.signals).map(s => s.at),
    ...Object.values(d.turnouts).map(t => t.at),
    ...d.labels.map(l => l.at),
  ]
  if (points.length === 0) return { x: 0, y: 0, width: d.width, height: d.height }
  const xs = points.map(p => p[0])
  const ys = points.map(p => p[1])
  const x = Math.max(0, Math.min(...xs) - margin)
  const y = Math.max(0, Math.min(...ys) - margin)
  const right = Math.min(d.width, Math.max(...xs) + margin)
  const bottom = Math.min(d.height, Math.max(...ys) + margin)
  return { x, y, width: Math.max(1, right - x), height: Math.max(1, bottom - y) }
}

/**
 * How much the marks (lamps, tags, berths, names) are enlarged at zoom `scale` (screen px per drawing unit),
 * so that they keep a readable size on the screen when the drawing is fitted small: marks are drawn at
 * `1/scale` (one mark unit = one screen pixel), never smaller than in the drawing, and at most `max` times it
 * (a very large layout fitted on a small screen would otherwise be covered by its own marks).
 */
export function markScale(scale: number, max = 2.4): number {
  if (!(scale > 0)) return 1
  return Math.min(Math.max(1 / scale, 1), max)
}

/** Sizes of the marks in mark units (screen pixels at the fitted zoom, see markScale). */
export const MARK = {
  lamp: 12.5,
  signalText: 16,
  tag: 13,
  tagOffset: 24,
  berthHeight: 23,
  berthText: 16,
  labelText: 16,
  /** Smallest tap target, each way (WCAG 2.2 SC 2.5.5 asks 44 x 44 CSS px). */
  hit: 44,
} as const

/** Width of a text of `chars` characters at `size` px in the drawing's font (Barlow, about 0.56 em a character). */
export function textWidth(chars: number, size: number): number {
  return chars * size * 0.56
}

/**
 * A block's path with `gap` drawing units taken off each end, so that the ends of neighbouring blocks stand
 * apart on the drawing (a path too short to lose that keeps its middle third).
 */
export function trimPath(path: Point[], gap: number): Point[] {
  if (path.length < 2) return path
  const cut = (pts: Point[], by: number): Point[] => {
    const out = pts.slice()
    let left = by
    while (out.length >= 2) {
      const [a, b] = [out[0]!, out[1]!]
      const len = Math.hypot(b[0] - a[0], b[1] - a[1])
      if (len > left) {
        const t = left / len
        out[0] = [a[0] + (b[0] - a[0]) * t, a[1] + (b[1] - a[1]) * t]
        return out
      }
      left -= len
      out.shift()
    }
    return out
  }
  let total = 0
  for (let i = 1; i < path.length; i++) total += Math.hypot(path[i]![0] - path[i - 1]![0], path[i]![1] - path[i - 1]![1])
  const g = Math.min(gap, total / 3)
  return cut(cut(path, g).reverse(), g).reverse()
}

/** Width in mark units of a berth holding `description` (an empty berth is a small box). */
export function berthWidth(description: string | null): number {
  // descriptions are set in a monospace face, about 0.62 em a character
  return Math.max(30, (description?.length ?? 0) * MARK.berthText * 0.62 + 14)
}

/** A box of at least MARK.hit x MARK.hit mark units round `centre`, `width` x `height` when larger. */
export function hitBox(centre: Point, width: number, height: number, k: number): { x: number, y: number, width: number, height: number } {
  const w = Math.max(width, MARK.hit) * k
  const h = Math.max(height, MARK.hit) * k
  return { x: centre[0] - w / 2, y: centre[1] - h / 2, width: w, height: h }
}

/** Where a signal's id is written, from the lamp centre in mark units, for a label pointing `dir`. */
export function signalTextOffset(id: string, dir: Point): Point {
  const [dx, dy] = dir
  const reach = MARK.lamp + 5 + Math.abs(dx) * textWidth(id.length, MARK.signalText) / 2 + Math.abs(dy) * MARK.signalText * 0.55
  return [dx * reach, dy * reach]
}

function segmentDistance(p: Point, a: Point, b: Point): number {
  const dx = b[0] - a[0]
  const dy = b[1] - a[1]
  const len2 = dx * dx + dy * dy
  const t = len2 === 0 ? 0 : Math.min(1, Math.max(0, ((p[0] - a[0]) * dx + (p[1] - a[1]) * dy) / len2))
  return Math.hypot(p[0] - (a[0] + t * dx), p[1] - (a[1] + t * dy))
}

/** The block whose drawn track runs nearest to `p`, within `radius` drawing units, or null. */
export function nearestBlock(def: Layout, p: Point, radius: number): string | null {
  let best: string | null = null
  let bestDistance = radius
  for (const [id, b] of Object.entries(def.diagram.blocks)) {
    for (let i = 1; i < b.path.length; i++) {
      const d = segmentDistance(p, b.path[i - 1]!, b.path[i]!)
      if (d <= bestDistance) {
        best = id
        bestDistance = d
      }
    }
  }
  return best
}

// after the side away from the track: beside the lamp, then slantwise, then the other side of the track
const COMPASS: Point[] = [[-1, 0], [1, 0], [-0.71, -0.71], [0.71, -0.71], [-0.71, 0.71], [0.71, 0.71], [0, -1], [0, 1]]

/**
 * Which way from a signal's lamp its name is written, as a unit vector: away from the nearest track, or, when
 * the name would land on another track there or off the drawing, the first of the other directions that keeps
 * it clear (`reach` drawing units out, `clearance` from any track and from the drawing's edge).
 */
export function signalLabelDirections(def: Layout, reach = 40, clearance = 16): Record<string, Point> {
  const segments: [Point, Point][] = []
  for (const b of Object.values(def.diagram.blocks)) {
    for (let i = 1; i < b.path.length; i++) segments.push([b.path[i - 1]!, b.path[i]!])
  }
  const r = reach * 2
  // each segment is filed under the grid cells its box (widened by r) covers, so a signal looks only at the
  // segments of its own cell instead of every segment of the layout
  const cells = new Map<string, number[]>()
  const cellOf = (v: number) => Math.floor(v / Math.max(r, 1))
  segments.forEach(([a, b], i) => {
    for (let cx = cellOf(Math.min(a[0], b[0]) - r); cx <= cellOf(Math.max(a[0], b[0]) + r); cx++) {
      for (let cy = cellOf(Math.min(a[1], b[1]) - r); cy <= cellOf(Math.max(a[1], b[1]) + r); cy++) {
        const key = `${cx},${cy}`
        const list = cells.get(key)
        if (list) list.push(i)
        else cells.set(key, [i])
      }
    }
  })
  const near = (p: Point): [Point, Point][] => (cells.get(`${cellOf(p[0])},${cellOf(p[1])}`) ?? [])
    .map(i => segments[i]!)
    .filter(([a, b]) => p[0] >= Math.min(a[0], b[0]) - r && p[0] <= Math.max(a[0], b[0]) + r && p[1] >= Math.min(a[1], b[1]) - r && p[1] <= Math.max(a[1], b[1]) + r)
  const gap = (p: Point, list: [Point, Point][]) => list.reduce((m, [a, b]) => Math.min(m, segmentDistance(p, a, b)), Infinity)
  const out: Record<string, Point> = {}
  for (const [id, s] of Object.entries(def.diagram.signals)) {
    const local = near(s.at)
    let away: Point = [0, -1]
    let best = Infinity
    for (const [a, b] of local) {
      const d = segmentDistance(s.at, a, b)
      if (d < best) {
        best = d
        const dx = b[0] - a[0]
        const dy = b[1] - a[1]
        const len2 = dx * dx + dy * dy || 1
        const t = Math.min(1, Math.max(0, ((s.at[0] - a[0]) * dx + (s.at[1] - a[1]) * dy) / len2))
        const fx = s.at[0] - (a[0] + t * dx)
        const fy = s.at[1] - (a[1] + t * dy)
        const len = Math.hypot(fx, fy)
        // on the track itself: the left-hand side of the direction of travel
        if (len > 0.5) away = [fx / len, fy / len]
        else {
          const [vx, vy] = facingVector(s.facing)
          away = [vy, -vx]
        }
      }
    }
    const candidates = [away, ...COMPASS]
    let chosen = away
    let chosenGap = -1
    for (const c of candidates) {
      const p: Point = [s.at[0] + c[0] * reach, s.at[1] + c[1] * reach]
      const edge = Math.min(p[0], p[1], def.diagram.width - p[0], def.diagram.height - p[1])
      const g = Math.min(gap(p, local), edge)
      if (g >= clearance) {
        chosen = c
        break
      }
      if (g > chosenGap) {
        chosen = c
        chosenGap = g
      }
    }
    out[id] = chosen
  }
  return out
}

/** Something on the diagram a tap can open, with where it is drawn (drawing units). */
export type Mark
  = | { key: string, at: Point, r: number }
    | { key: string, box: { x: number, y: number, width: number, height: number } }

/** Distance from `p` to a mark's drawn shape (0 inside it). */
export function markDistance(m: Mark, p: Point): number {
  if ('box' in m) {
    const dx = Math.max(m.box.x - p[0], 0, p[0] - (m.box.x + m.box.width))
    const dy = Math.max(m.box.y - p[1], 0, p[1] - (m.box.y + m.box.height))
    return Math.hypot(dx, dy)
  }
  return Math.max(0, Math.hypot(m.at[0] - p[0], m.at[1] - p[1]) - m.r)
}

function markCentre(m: Mark): Point {
  return 'box' in m ? [m.box.x + m.box.width / 2, m.box.y + m.box.height / 2] : m.at
}

/**
 * The key of the mark nearest to a tap at `p`, if one is within `radius` (drawing units) of its shape; where
 * shapes overlap, the one whose centre is nearer wins.
 */
export function nearestMark(marks: Iterable<Mark>, p: Point, radius: number): string | null {
  let best: string | null = null
  let bestScore = Infinity
  for (const m of marks) {
    const d = markDistance(m, p)
    if (d > radius) continue
    const c = markCentre(m)
    const score = d + 0.1 * Math.hypot(c[0] - p[0], c[1] - p[1])
    if (score < bestScore) {
      best = m.key
      bestScore = score
    }
  }
  return best
}

/** Which side of a turnout's point its tag goes: +1 below, -1 above, away from where its legs run. */
export function turnoutTagSide(at: Point, legs: { normal: [Point, Point], reverse: [Point, Point] }): number {
  return legs.normal[1][1] + legs.reverse[1][1] - 2 * at[1] > 0 ? -1 : 1
}

const TAG_DIRECTIONS: Point[] = [[0, 1], [0, -1], [0.71, 0.71], [-0.71, 0.71], [0.71, -0.71], [-0.71, -0.71], [1, 0], [-1, 0]]

/**
 * Which way from each turnout's point its tag is drawn, as a unit vector: of below, above, the diagonals and
 * the sides (the side away from its legs first), the one whose tag lands farthest from the other marks at
 * mark scale `k` (signal lamps and ids, berths, other turnouts), so that each keeps a tap area of its own.
 */
export function turnoutTagDirections(def: Layout, k: number, labelDirs: Record<string, Point>): Record<string, Point> {
  const others: { owner: string, at: Point }[] = []
  for (const [id, s] of Object.entries(def.diagram.signals)) {
    others.push({ owner: `signal:${id}`, at: s.at })
    const [ox, oy] = signalTextOffset(id, labelDirs[id] ?? [0, -1])
    others.push({ owner: `signal:${id}`, at: [s.at[0] + ox * k, s.at[1] + oy * k] })
  }
  for (const [id, b] of Object.entries(def.diagram.blocks)) if (b.label) others.push({ owner: `block:${id}`, at: b.label })
  for (const [id, t] of Object.entries(def.diagram.turnouts)) others.push({ owner: `turnout:${id}`, at: t.at })
  const out: Record<string, Point> = {}
  // tap boxes are squares: two keep apart when their centres are a box apart along x or y
  const apart = (a: Point, b: Point) => Math.max(Math.abs(a[0] - b[0]), Math.abs(a[1] - b[1]))
  for (const t of def.turnouts) {
    const at = def.diagram.turnouts[t.id]?.at
    const legs = turnoutLegs(def, t.id)
    if (!at || !legs) continue
    const first: Point = [0, turnoutTagSide(at, legs)]
    let best = first
    let bestGap = -1
    for (const dir of [first, ...TAG_DIRECTIONS]) {
      const p = tagPoint(at, dir, k)
      const gap = others.filter(o => o.owner !== `turnout:${t.id}`).reduce((m, o) => Math.min(m, apart(o.at, p)), Infinity)
      // a clear enough place is taken at once, so tags stay on their usual side where they can
      if (gap >= MARK.hit * k) {
        best = dir
        break
      }
      if (gap > bestGap + 0.5) {
        best = dir
        bestGap = gap
      }
    }
    out[t.id] = best
    others.push({ owner: `tag:${t.id}`, at: tagPoint(at, best, k) })
  }
  return out
}

/** Where a turnout's tag is drawn: `dir` (from turnoutTagDirections) away from its point, at mark scale `k`. */
export function tagPoint(at: Point, dir: Point, k: number): Point {
  return [at[0] + dir[0] * MARK.tagOffset * k, at[1] + dir[1] * MARK.tagOffset * k]
}

export interface DrawnTurnout { id: string, at: Point, legs: { normal: [Point, Point], reverse: [Point, Point] }, tag: Point }

/** Every turnout that is drawn, with its legs and where its tag goes (as the Panel and the editor draw them). */
export function drawnTurnouts(def: Layout, k: number, tagDirs: Record<string, Point>): DrawnTurnout[] {
  return def.turnouts.flatMap((t) => {
    const legs = turnoutLegs(def, t.id)
    const at = def.diagram.turnouts[t.id]?.at
    return legs && at ? [{ id: t.id, at, legs, tag: tagPoint(at, tagDirs[t.id] ?? [0, 1], k) }] : []
  })
}

/**
 * Every tap target on the drawing at mark scale `k`, in drawing units: a box of at least MARK.hit x MARK.hit
 * mark units round each signal lamp, turnout tag and berth, the turnout's point, and each signal's id (its
 * text, a little enlarged) as part of its signal. `shown` is what each berth holds ("?" for an undescribed train).
 */
export function diagramMarks(def: Layout, k: number, labelDirs: Record<string, Point>, tagDirs: Record<string, Point>, shown: (block: string) => string | null): Mark[] {
  const d = def.diagram
  const out: Mark[] = []
  for (const [id, sig] of Object.entries(d.signals)) {
    out.push({ key: `signal:${id}`, box: hitBox(sig.at, 2 * MARK.lamp, 2 * MARK.lamp, k) })
    const [ox, oy] = signalTextOffset(id, labelDirs[id] ?? [0, -1])
    const w = (textWidth(id.length, MARK.signalText) + 8) * k
    const h = (MARK.signalText * 1.2 + 6) * k
    out.push({ key: `signal:${id}`, box: { x: sig.at[0] + ox * k - w / 2, y: sig.at[1] + oy * k - h / 2, width: w, height: h } })
  }
  for (const t of def.turnouts) {
    const at = d.turnouts[t.id]?.at
    const dir = tagDirs[t.id]
    if (!at || !dir) continue
    out.push({ key: `turnout:${t.id}`, box: hitBox(tagPoint(at, dir, k), 2 * MARK.tag, 2 * MARK.tag, k) })
    out.push({ key: `turnout:${t.id}`, at, r: 6 })
  }
  for (const [id, b] of Object.entries(d.blocks)) {
    if (b.label) out.push({ key: `block:${id}`, box: hitBox(b.label, berthWidth(shown(id)), MARK.berthHeight, k) })
  }
  return out
}
