import type { DiagramFacingName, Layout, Point } from '#shared/schemas/layout'

/**
 * Pure edits of a layout definition for the editor. Each returns nothing and changes `def` in place (the
 * editor works on its own copy and keeps copies for undo). Ids are made up as B1, B2, ... and can be
 * changed afterwards.
 */

/** Snapping grid of the editor, in drawing units. */
export const GRID = 20

export type ItemKind = 'block' | 'link' | 'turnout' | 'signal' | 'area' | 'label'
export interface ItemRef { kind: ItemKind, id: string }

/** The editor's tools: `try` runs the signalling engine in the browser. */
export type EditorTool = 'select' | 'block' | 'link' | 'turnout' | 'signal' | 'label' | 'try'

export const snap = (p: Point, grid = GRID): Point => [Math.round(p[0] / grid) * grid, Math.round(p[1] / grid) * grid]
export const samePoint = (a: Point, b: Point) => Math.abs(a[0] - b[0]) < 0.5 && Math.abs(a[1] - b[1]) < 0.5

/** The first free id of the form `<prefix><n>`. */
export function nextId(prefix: string, taken: Iterable<string>): string {
  const set = new Set(taken)
  for (let n = 1; ; n++) if (!set.has(`${prefix}${n}`)) return `${prefix}${n}`
}

export function pathLength(path: Point[]): number {
  let sum = 0
  for (let i = 1; i < path.length; i++) sum += Math.hypot(path[i]![0] - path[i - 1]![0], path[i]![1] - path[i - 1]![1])
  return sum
}

/** Middle of a polyline, along its length: where a new block's berth goes (a little above the track). */
export function pathMiddle(path: Point[]): Point {
  const half = pathLength(path) / 2
  let run = 0
  for (let i = 1; i < path.length; i++) {
    const [a, b] = [path[i - 1]!, path[i]!]
    const seg = Math.hypot(b[0] - a[0], b[1] - a[1])
    if (run + seg >= half && seg > 0) {
      const t = (half - run) / seg
      return [a[0] + (b[0] - a[0]) * t, a[1] + (b[1] - a[1]) * t]
    }
    run += seg
  }
  return path[0] ?? [0, 0]
}

export function segmentDistance(p: Point, a: Point, b: Point): number {
  const dx = b[0] - a[0]
  const dy = b[1] - a[1]
  const len2 = dx * dx + dy * dy
  const t = len2 === 0 ? 0 : Math.min(1, Math.max(0, ((p[0] - a[0]) * dx + (p[1] - a[1]) * dy) / len2))
  return Math.hypot(p[0] - (a[0] + t * dx), p[1] - (a[1] + t * dy))
}

export function distanceToPath(p: Point, path: Point[]): number {
  if (path.length === 1) return Math.hypot(p[0] - path[0]![0], p[1] - path[0]![1])
  let best = Infinity
  for (let i = 1; i < path.length; i++) best = Math.min(best, segmentDistance(p, path[i - 1]!, path[i]!))
  return best
}

const allIds = (def: Layout) => [...def.blocks.map(b => b.id), ...def.signals.map(s => s.id), ...def.turnouts.map(t => t.id), ...def.areas.map(a => a.id)]

/**
 * A new block drawn along `path`, with a detector of its own. When its first point is where another block's
 * drawing ends, a link runs from that block into it (the direction of travel as drawn); when its last point
 * is where another block's drawing starts, a link runs from it into that one.
 */
export function addBlock(def: Layout, path: Point[], mmPerUnit = 5): string {
  const id = nextId('B', allIds(def))
  const detector = nextId('D', def.blocks.flatMap(b => b.detectors))
  def.blocks.push({ id, name: `Block ${id.slice(1)}`, lengthMm: Math.max(10, Math.round(pathLength(path) * mmPerUnit)), detectors: [detector] })
  const mid = pathMiddle(path)
  def.diagram.blocks[id] = { path, label: [mid[0], Math.max(0, mid[1] - 30)] }
  for (const other of def.blocks) {
    if (other.id === id) continue
    const p = def.diagram.blocks[other.id]?.path
    if (!p?.length) continue
    if (samePoint(p[p.length - 1]!, path[0]!)) addLink(def, other.id, id)
    if (samePoint(p[0]!, path[path.length - 1]!)) addLink(def, id, other.id)
  }
  return id
}

export function addLink(def: Layout, from: string, to: string): boolean {
  if (from === to || def.links.some(l => l.from === from && l.to === to)) return false
  def.links.push({ from, to })
  return true
}

/** Direction of travel at the end of a path, to the nearest of the four drawn directions. */
export function facingAtEnd(path: Point[]): DiagramFacingName {
  const a = path[path.length - 2] ?? path[0]!
  const b = path[path.length - 1]!
  const dx = b[0] - a[0]
  const dy = b[1] - a[1]
  if (Math.abs(dx) >= Math.abs(dy)) return dx >= 0 ? 'right' : 'left'
  return dy >= 0 ? 'down' : 'up'
}

/** The block whose drawing passes nearest to `p`, within `radius`. */
export function nearestBlock(def: Layout, p: Point, radius: number): string | null {
  let best: string | null = null
  let bestD = radius
  for (const b of def.blocks) {
    const path = def.diagram.blocks[b.id]?.path
    if (!path) continue
    const d = distanceToPath(p, path)
    if (d <= bestD) {
      best = b.id
      bestD = d
    }
  }
  return best
}

/**
 * A signal at the exit of the block drawn nearest to `p`, reading into the first block linked from it,
 * drawn beside the track on the left of the direction of travel.
 */
export function addSignal(def: Layout, p: Point, radius: number): string | null {
  const from = nearestBlock(def, p, radius)
  if (!from) return null
  const id = nextId('S', allIds(def))
  const path = def.diagram.blocks[from]!.path
  const facing = facingAtEnd(path)
  const protects = def.links.find(l => l.from === from && !def.signals.some(s => s.from === from && s.protects === l.to))?.to
    ?? def.links.find(l => l.from === from)?.to ?? from
  def.signals.push({ id, name: `Signal ${id.slice(1)}`, kind: 'three-aspect', from, protects })
  def.diagram.signals[id] = { at: snap(p), facing }
  return id
}

/**
 * A turnout where the legs part at `p`: in the block whose drawing ends there, with its two onward blocks
 * (by the links) as the normal and reverse legs when it has them.
 */
export function addTurnout(def: Layout, p: Point, radius: number): string | null {
  const at = snap(p)
  const ending = def.blocks.find((b) => { const path = def.diagram.blocks[b.id]?.path; return path && samePoint(path[path.length - 1]!, at) })
  const block = ending?.id ?? nearestBlock(def, p, radius)
  if (!block) return null
  const onward = def.links.filter(l => l.from === block).map(l => l.to)
  const id = nextId('T', allIds(def))
  def.turnouts.push({ id, block, normal: onward[0] ?? block, reverse: onward[1] ?? onward[0] ?? block })
  def.diagram.turnouts[id] = { at }
  return id
}

export function addLabel(def: Layout, p: Point, text = 'Label'): string {
  def.diagram.labels.push({ text, at: snap(p) })
  return String(def.diagram.labels.length - 1)
}

export function addArea(def: Layout): string {
  const id = nextId('area', def.areas.map(a => a.id))
  def.areas.push({ id, name: `Area ${id.slice(4)}`, signals: [], turnouts: [] })
  return id
}

/** Removes an item and everything that refers to it (links, signals and turnouts of a block, area entries, drawing). */
export function deleteItem(def: Layout, item: ItemRef): void {
  const { id } = item
  if (item.kind === 'block') {
    def.blocks = def.blocks.filter(b => b.id !== id)
    def.links = def.links.filter(l => l.from !== id && l.to !== id)
    for (const s of def.signals.filter(s => s.from === id || s.protects === id)) deleteItem(def, { kind: 'signal', id: s.id })
    for (const t of def.turnouts.filter(t => t.block === id || t.normal === id || t.reverse === id)) deleteItem(def, { kind: 'turnout', id: t.id })
    delete def.diagram.blocks[id]
  } else if (item.kind === 'link') {
    def.links = def.links.filter(l => `${l.from}>${l.to}` !== id)
  } else if (item.kind === 'signal') {
    def.signals = def.signals.filter(s => s.id !== id)
    for (const a of def.areas) a.signals = a.signals.filter(s => s !== id)
    delete def.diagram.signals[id]
  } else if (item.kind === 'turnout') {
    def.turnouts = def.turnouts.filter(t => t.id !== id)
    for (const a of def.areas) a.turnouts = a.turnouts.filter(t => t !== id)
    delete def.diagram.turnouts[id]
  } else if (item.kind === 'area') {
    def.areas = def.areas.filter(a => a.id !== id)
  } else {
    def.diagram.labels.splice(Number(id), 1)
  }
}

const moved = (p: Point, dx: number, dy: number, w: number, h: number): Point =>
  [Math.min(w, Math.max(0, p[0] + dx)), Math.min(h, Math.max(0, p[1] + dy))]

/** Moves an item's drawing by (dx, dy), kept inside the drawing area. Blocks move with their berth. */
export function moveItem(def: Layout, item: ItemRef, dx: number, dy: number): void {
  const { width: w, height: h } = def.diagram
  if (item.kind === 'block') {
    const d = def.diagram.blocks[item.id]
    if (!d) return
    d.path = d.path.map(p => moved(p, dx, dy, w, h))
    if (d.label) d.label = moved(d.label, dx, dy, w, h)
  } else if (item.kind === 'signal') {
    const d = def.diagram.signals[item.id]
    if (d) d.at = moved(d.at, dx, dy, w, h)
  } else if (item.kind === 'turnout') {
    const d = def.diagram.turnouts[item.id]
    if (d) d.at = moved(d.at, dx, dy, w, h)
  } else if (item.kind === 'label') {
    const d = def.diagram.labels[Number(item.id)]
    if (d) d.at = moved(d.at, dx, dy, w, h)
  }
}

/** One point of a block's drawn track: the block and the point's place in its path. */
export interface TrackPoint { block: string, index: number }

/** What stands at one end of a block's track and goes with that end when it is dragged. */
export interface EndFollowers {
  /** The ends of other blocks' tracks drawn at the same place (joined to it). */
  ends: TrackPoint[]
  signals: string[]
  turnouts: string[]
}

const isEnd = (path: Point[], index: number) => index === 0 || index === path.length - 1

/** Index of the end of `path` (first or last point) nearest to `p`. */
function nearestEnd(path: Point[], p: Point): number {
  const last = path.length - 1
  const [a, b] = [path[0]!, path[last]!]
  return Math.hypot(b[0] - p[0], b[1] - p[1]) < Math.hypot(a[0] - p[0], a[1] - p[1]) ? last : 0
}

/**
 * What follows point `index` of `block`'s track when it is dragged. A bend moves alone (nothing follows). An
 * end takes with it the ends of other blocks' tracks drawn at the same place (the neighbours joined there),
 * and the signals and turnouts drawn at that end: a signal stands at an end of its `from` block and a
 * turnout at an end of its own block (where the legs part), each at the end of that block's track nearest
 * to where it is drawn; it follows when that end is the dragged end or one joined to it. A signal or turnout
 * drawn exactly on the dragged end follows whatever its block.
 */
export function trackEndFollowers(def: Layout, block: string, index: number): EndFollowers {
  const none: EndFollowers = { ends: [], signals: [], turnouts: [] }
  const path = def.diagram.blocks[block]?.path
  const at = path?.[index]
  if (!path || !at || !isEnd(path, index)) return none
  const ends: TrackPoint[] = []
  for (const [id, b] of Object.entries(def.diagram.blocks)) {
    if (id === block || !b.path.length) continue
    const last = b.path.length - 1
    if (samePoint(b.path[0]!, at)) ends.push({ block: id, index: 0 })
    else if (samePoint(b.path[last]!, at)) ends.push({ block: id, index: last })
  }
  const joined = [{ block, index }, ...ends]
  const standsAtJoinedEnd = (owner: string, p: Point) => {
    if (samePoint(p, at)) return true
    const own = def.diagram.blocks[owner]?.path
    if (!own?.length) return false
    const end = nearestEnd(own, p)
    return joined.some(j => j.block === owner && j.index === end)
  }
  const signals = def.signals.filter((s) => {
    const drawn = def.diagram.signals[s.id]
    return drawn && standsAtJoinedEnd(s.from, drawn.at)
  }).map(s => s.id)
  const turnouts = def.turnouts.filter((t) => {
    const drawn = def.diagram.turnouts[t.id]
    return drawn && standsAtJoinedEnd(t.block, drawn.at)
  }).map(t => t.id)
  return { ends, signals, turnouts }
}

/**
 * Moves one point of a block's track (a bend, or an end) by (dx, dy) from where it is, onto the grid and
 * inside the drawing area. The rest of the track and the berth stay where they are. When the point is an
 * end, what stands there follows (trackEndFollowers): the joined ends of neighbouring tracks go to the same
 * new place, and the signals and turnouts drawn at that end move by as much as the end did, so the drawing
 * stays joined.
 */
export function movePathPoint(def: Layout, block: string, index: number, dx: number, dy: number): void {
  const d = def.diagram.blocks[block]
  const p = d?.path[index]
  if (!d || !p) return
  const followers = trackEndFollowers(def, block, index)
  const { width: w, height: h } = def.diagram
  const to = moved(snap(moved(p, dx, dy, w, h)), 0, 0, w, h)
  const [mx, my] = [to[0] - p[0], to[1] - p[1]]
  const place = (entry: { path: Point[] }, i: number) => {
    const next = [...entry.path]
    next[i] = [to[0], to[1]]
    entry.path = next
  }
  place(d, index)
  for (const end of followers.ends) place(def.diagram.blocks[end.block]!, end.index)
  for (const id of followers.signals) {
    const s = def.diagram.signals[id]!
    s.at = moved(s.at, mx, my, w, h)
  }
  for (const id of followers.turnouts) {
    const t = def.diagram.turnouts[id]!
    t.at = moved(t.at, mx, my, w, h)
  }
}

/** The parts of the drawing a drag moves (by their keys in `diagram`; labels by their place in the list). */
export interface DragMoves {
  /** Blocks whose track changes. */
  blocks: string[]
  /** Blocks whose berth moves. */
  berths: string[]
  signals: string[]
  turnouts: string[]
  labels: number[]
}

/** What a drag of `item` moves: the whole item, or (`point` not null) that point of a block's track with what follows it. */
export function dragMoves(def: Layout, item: ItemRef, point: number | null): DragMoves {
  const out: DragMoves = { blocks: [], berths: [], signals: [], turnouts: [], labels: [] }
  const d = def.diagram
  if (item.kind === 'block' && d.blocks[item.id]) {
    out.blocks.push(item.id)
    if (point === null) {
      if (d.blocks[item.id]!.label) out.berths.push(item.id)
    } else {
      const f = trackEndFollowers(def, item.id, point)
      out.blocks.push(...f.ends.map(e => e.block))
      out.signals.push(...f.signals)
      out.turnouts.push(...f.turnouts)
    }
  } else if (item.kind === 'signal' && d.signals[item.id]) out.signals.push(item.id)
  else if (item.kind === 'turnout' && d.turnouts[item.id]) out.turnouts.push(item.id)
  else if (item.kind === 'label' && d.labels[Number(item.id)]) out.labels.push(Number(item.id))
  return out
}

/**
 * One step of a drag, as a new layout: `start` (the layout when the drag began, never changed) with `item`
 * moved by (dx, dy), or point `point` of its track (movePathPoint). Only the entries of the drawing that move
 * are copied; everything else is `start`'s own objects, so the drawing can tell at once what moved.
 */
export function dragStep(start: Layout, item: ItemRef, point: number | null, dx: number, dy: number, moves = dragMoves(start, item, point)): Layout {
  const d = start.diagram
  // a list of 500 entries is copied only when one of them moves
  const diagram = {
    ...d,
    blocks: moves.blocks.length ? { ...d.blocks } : d.blocks,
    signals: moves.signals.length ? { ...d.signals } : d.signals,
    turnouts: moves.turnouts.length ? { ...d.turnouts } : d.turnouts,
    labels: moves.labels.length ? [...d.labels] : d.labels,
  }
  for (const id of moves.blocks) diagram.blocks[id] = { ...d.blocks[id]! }
  for (const id of moves.signals) diagram.signals[id] = { ...d.signals[id]! }
  for (const id of moves.turnouts) diagram.turnouts[id] = { ...d.turnouts[id]! }
  for (const i of moves.labels) diagram.labels[i] = { ...d.labels[i]! }
  const next = { ...start, diagram }
  if (item.kind === 'block' && point !== null) movePathPoint(next, item.id, point, dx, dy)
  else moveItem(next, item, dx, dy)
  return next
}

/** Renames an item's id everywhere it is referred to. False when the new id is taken. */
export function renameId(def: Layout, item: ItemRef, to: string): boolean {
  const from = item.id
  if (from === to) return true
  if (allIds(def).includes(to)) return false
  const swap = (x: string) => (x === from ? to : x)
  const rekey = <T>(rec: Record<string, T>) => {
    if (!(from in rec)) return
    rec[to] = rec[from]!
    delete rec[from]
  }
  if (item.kind === 'block') {
    def.blocks.forEach((b) => { b.id = swap(b.id) })
    def.links.forEach((l) => { l.from = swap(l.from); l.to = swap(l.to) })
    def.signals.forEach((s) => {
      s.from = swap(s.from)
      s.protects = swap(s.protects)
      if (s.indicators && from in s.indicators) rekey(s.indicators)
    })
    def.turnouts.forEach((t) => {
      t.block = swap(t.block)
      t.normal = swap(t.normal)
      t.reverse = swap(t.reverse)
    })
    rekey(def.diagram.blocks)
  } else if (item.kind === 'signal') {
    def.signals.forEach((s) => { s.id = swap(s.id) })
    def.areas.forEach((a) => { a.signals = a.signals.map(swap) })
    rekey(def.diagram.signals)
  } else if (item.kind === 'turnout') {
    def.turnouts.forEach((t) => { t.id = swap(t.id) })
    def.areas.forEach((a) => { a.turnouts = a.turnouts.map(swap) })
    rekey(def.diagram.turnouts)
  } else if (item.kind === 'area') {
    def.areas.forEach((a) => { a.id = swap(a.id) })
  }
  return true
}

/**
 * The item a validation error is about, from its path (`signals[3].protects`, `diagram.blocks.B2.path[1]`,
 * `blocks[0]`), so the editor can show the error at that item and take you to it.
 */
export function itemOfError(def: Layout, path: string): ItemRef | null {
  let m = /^(blocks|signals|turnouts|areas)\[(\d+)\]/.exec(path)
  if (m) {
    const list = { blocks: def.blocks, signals: def.signals, turnouts: def.turnouts, areas: def.areas }[m[1] as 'blocks']
    const it = list[Number(m[2])]
    const kind = ({ blocks: 'block', signals: 'signal', turnouts: 'turnout', areas: 'area' } as const)[m[1] as 'blocks']
    return it ? { kind, id: it.id } : null
  }
  m = /^links\[(\d+)\]/.exec(path)
  if (m) {
    const l = def.links[Number(m[1])]
    return l ? { kind: 'link', id: `${l.from}>${l.to}` } : null
  }
  m = /^diagram\.(blocks|signals|turnouts)\.([^.[]+)/.exec(path)
  if (m) return { kind: ({ blocks: 'block', signals: 'signal', turnouts: 'turnout' } as const)[m[1] as 'blocks'], id: m[2]! }
  m = /^diagram\.labels\[(\d+)\]/.exec(path)
  if (m) return { kind: 'label', id: m[1]! }
  return null
}

/** Where an item is drawn (for an error marker, and to bring it into view). */
export function itemPoint(def: Layout, item: ItemRef): Point | null {
  const d = def.diagram
  if (item.kind === 'block') { const b = d.blocks[item.id]; return b ? (b.label ?? pathMiddle(b.path)) : null }
  if (item.kind === 'signal') return d.signals[item.id]?.at ?? null
  if (item.kind === 'turnout') return d.turnouts[item.id]?.at ?? null
  if (item.kind === 'label') return d.labels[Number(item.id)]?.at ?? null
  if (item.kind === 'link') {
    const [from, to] = item.id.split('>')
    const a = d.blocks[from!]?.path
    const b = d.blocks[to!]?.path
    if (a && b) return [(a[a.length - 1]![0] + b[0]![0]) / 2, (a[a.length - 1]![1] + b[0]![1]) / 2]
    return a?.[a.length - 1] ?? null
  }
  return null
}

/**
 * `next` with every part that is deep-equal to the same part of `prev` replaced by prev's own object (plain
 * JSON-like data). The editor treats a layout as unchangeable and makes a new one for each edit: what an edit
 * did not touch keeps its identity, so the drawing redraws only what changed and undo keeps old versions as
 * they are, without copies.
 */
export function shareUnchanged<T>(prev: T | undefined, next: T): T {
  if (Object.is(prev, next)) return next
  if (typeof prev !== 'object' || typeof next !== 'object' || prev === null || next === null) return next
  if (Array.isArray(prev) !== Array.isArray(next)) return next
  if (Array.isArray(next)) {
    const before = prev as unknown[]
    let same = before.length === next.length
    const out = next.map((value, i) => {
      const kept = shareUnchanged(before[i], value)
      if (kept !== before[i]) same = false
      return kept
    })
    return (same ? prev : out) as T
  }
  const before = prev as Record<string, unknown>
  const after = next as Record<string, unknown>
  const keys = Object.keys(after)
  let same = keys.length === Object.keys(before).length
  const out: Record<string, unknown> = {}
  for (const key of keys) {
    const kept = shareUnchanged(before[key], after[key])
    out[key] = kept
    if (kept !== before[key] || !(key in before)) same = false
  }
  return (same ? prev : out) as T
}

/** The arrow drawn where a link joins two drawn blocks, pointing the way trains run (null when either is not drawn). */
export function linkArrow(def: Layout, link: { from: string, to: string }): { key: string, x: number, y: number, angle: number } | null {
  const a = def.diagram.blocks[link.from]?.path
  const b = def.diagram.blocks[link.to]?.path
  if (!a?.length || !b?.length) return null
  const end = a[a.length - 1]!
  const start = b[0]!
  const next = b[1] ?? start
  const angle = Math.atan2(next[1] - start[1], next[0] - start[0]) * 180 / Math.PI
  return { key: `${link.from}>${link.to}`, x: (end[0] + start[0]) / 2, y: (end[1] + start[1]) / 2, angle }
}
