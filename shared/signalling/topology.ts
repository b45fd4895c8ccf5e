import type { Layout, LayoutBlock, LayoutSignal, LayoutTurnout } from '../schemas/layout'
import type { TurnoutPosition } from './types'

/**
 * Precomputed lookups for one layout: neighbours, turnouts per block, signals by place, and which signals
 * depend on which block and turnout. Built once per layout object and cached, so the engine's work per event
 * is proportional to what the event touches.
 *
 * How trains move through a block (`cur`, entered from `prev`):
 * - no reversing inside a block: a train does not leave by the block it came from;
 * - through a turnout, a train runs from a leg to the other side (trailing: the turnout must be set for the
 *   leg it comes from) or from the other side to a leg (facing: it must be set for the leg it takes); never
 *   from one leg to the other.
 */
export interface Topology {
  blocks: LayoutBlock[]
  blockIds: string[]
  detectorIds: string[]
  turnoutIds: string[]
  signalIds: string[]
  blockById: Map<string, LayoutBlock>
  /** Outgoing neighbours (links from the block), in link order. */
  out: Map<string, string[]>
  /** Incoming neighbours (links into the block), in link order. */
  inc: Map<string, string[]>
  turnoutById: Map<string, LayoutTurnout>
  turnoutsIn: Map<string, LayoutTurnout[]>
  signals: LayoutSignal[]
  signalById: Map<string, LayoutSignal>
  signalOrder: Map<string, number>
  /** Stop signal (two-, three-, four-aspect) standing at the exit of `from` reading into `to`. */
  stopAt: Map<string, LayoutSignal>
  detectorBlock: Map<string, string>
  /** Signals whose section can contain the block (for some setting of the turnouts). */
  signalsByBlock: Map<string, string[]>
  /** Signals whose route can depend on the turnout. */
  signalsByTurnout: Map<string, string[]>
  /** Signals that can read this stop signal as their next signal. */
  rearOf: Map<string, string[]>
  /** Per signal: every block its section can contain, every turnout its route can pass, every possible next signal. */
  reach: Map<string, Reach>
}

export interface Reach {
  blocks: Set<string>
  turnouts: Set<string>
  nexts: Set<string>
  /** Legs of facing turnouts on the signal's possible routes (where a junction indicator can apply). */
  facingLegs: Set<string>
}

export const placeKey = (from: string, to: string): string => `${from}\u0000${to}`

export const isStop = (s: LayoutSignal): boolean => s.kind !== 'distant'

export const own = (o: object, key: string): boolean => Object.prototype.hasOwnProperty.call(o, key)

const cache = new WeakMap<Layout, Topology>()

/** The topology of a layout, built on first use and kept for as long as the layout object lives. */
export function topologyOf(layout: Layout): Topology {
  let t = cache.get(layout)
  if (!t) {
    t = buildTopology(layout)
    cache.set(layout, t)
  }
  return t
}

function push<K, V>(m: Map<K, V[]>, k: K, v: V): void {
  const a = m.get(k)
  if (a) a.push(v)
  else m.set(k, [v])
}

export function buildTopology(layout: Layout): Topology {
  const blockById = new Map<string, LayoutBlock>()
  const out = new Map<string, string[]>()
  const inc = new Map<string, string[]>()
  const detectorBlock = new Map<string, string>()
  for (const b of layout.blocks) {
    if (blockById.has(b.id)) continue
    blockById.set(b.id, b)
    out.set(b.id, [])
    inc.set(b.id, [])
    for (const d of b.detectors) if (!detectorBlock.has(d)) detectorBlock.set(d, b.id)
  }
  const seenLink = new Set<string>()
  for (const l of layout.links) {
    if (!blockById.has(l.from) || !blockById.has(l.to) || l.from === l.to) continue
    const k = placeKey(l.from, l.to)
    if (seenLink.has(k)) continue
    seenLink.add(k)
    out.get(l.from)!.push(l.to)
    inc.get(l.to)!.push(l.from)
  }
  const turnoutById = new Map<string, LayoutTurnout>()
  const turnoutsIn = new Map<string, LayoutTurnout[]>()
  for (const t of layout.turnouts) {
    if (turnoutById.has(t.id) || !blockById.has(t.block)) continue
    turnoutById.set(t.id, t)
    push(turnoutsIn, t.block, t)
  }
  const signalById = new Map<string, LayoutSignal>()
  const signalOrder = new Map<string, number>()
  const stopAt = new Map<string, LayoutSignal>()
  const signals: LayoutSignal[] = []
  for (const s of layout.signals) {
    if (signalById.has(s.id)) continue
    signalById.set(s.id, s)
    signalOrder.set(s.id, signals.length)
    signals.push(s)
    const k = placeKey(s.from, s.protects)
    if (isStop(s) && !stopAt.has(k)) stopAt.set(k, s)
  }
  const t: Topology = {
    blocks: [...blockById.values()],
    blockIds: [...blockById.keys()],
    detectorIds: [...detectorBlock.keys()],
    turnoutIds: [...turnoutById.keys()],
    signalIds: signals.map(s => s.id),
    blockById,
    out,
    inc,
    turnoutById,
    turnoutsIn,
    signals,
    signalById,
    signalOrder,
    stopAt,
    detectorBlock,
    signalsByBlock: new Map(),
    signalsByTurnout: new Map(),
    rearOf: new Map(),
    reach: new Map(),
  }
  // every way through every block, worked out once
  for (const b of t.blockIds) for (const p of t.inc.get(b)!) moveOf(t, b, p)
  for (const s of signals) {
    const r = reachOf(t, s)
    t.reach.set(s.id, r)
    for (const b of r.blocks) push(t.signalsByBlock, b, s.id)
    for (const x of r.turnouts) push(t.signalsByTurnout, x, s.id)
    for (const n of r.nexts) push(t.rearOf, n, s.id)
  }
  return t
}

export const legOf = (t: LayoutTurnout, pos: TurnoutPosition): string | null =>
  pos === 'normal' ? t.normal : pos === 'reverse' ? t.reverse : null

export const isLeg = (t: LayoutTurnout, b: string): boolean => t.normal === b || t.reverse === b

/**
 * Blocks a train in `cur` that came from `prev` can run into next (before turnout positions are looked at).
 * `prev` null: the train's origin is unknown (start of a route at a signal's `from` block); then every
 * outgoing link counts.
 */
export function onward(t: Topology, cur: string, prev: string | null): string[] {
  const outs = t.out.get(cur) ?? []
  if (prev === null) return outs
  const tos = t.turnoutsIn.get(cur)
  let res = outs.filter(b => b !== prev)
  if (tos) {
    for (const x of tos) {
      if (isLeg(x, prev)) {
        const other = x.normal === prev ? x.reverse : x.normal
        res = res.filter(b => b !== other)
      }
    }
  }
  return res
}

/** A turnout that a movement prev -> cur -> next runs through, and the leg it must be set for. */
export interface TurnoutNeed {
  turnout: LayoutTurnout
  leg: string
  facing: boolean
}

/** The turnouts in `cur` that the movement prev -> cur -> next depends on. */
export function needsThrough(t: Topology, cur: string, prev: string | null, next: string | null): TurnoutNeed[] {
  const tos = t.turnoutsIn.get(cur)
  if (!tos) return []
  const res: TurnoutNeed[] = []
  for (const x of tos) {
    if (prev !== null && isLeg(x, prev)) res.push({ turnout: x, leg: prev, facing: false })
    else if (next !== null && isLeg(x, next)) res.push({ turnout: x, leg: next, facing: true })
  }
  return res
}

export interface Trace {
  /** Blocks of the section in route order: from `protects` up to and including the block where the next stop signal stands. */
  blocks: string[]
  /** False when a turnout on the route is unknown or set against it; `blocks` then stops there. */
  routeSet: boolean
  /** The next stop signal on the set route, or null (end of line). */
  next: LayoutSignal | null
  /** Junction indicator for the set route, if the route takes a leg listed in the signal's indicators. */
  indicator: string | null
}

type PositionOf = (turnoutId: string) => TurnoutPosition

/** How a train in `cur` that came from `prev` can go on; worked out once per (block, entry) and kept. */
interface Move {
  /** The ways on (before turnout positions are looked at). */
  cands: string[]
  /** The facing turnout choosing between two ways on, if there are two. */
  fork: LayoutTurnout | null
  /** Per way on: the turnouts in `cur` it depends on, and the stop signal standing at `cur` -> that block. */
  steps: Map<string, { needs: TurnoutNeed[], stop: LayoutSignal | null }>
  /** With no way on: the turnouts the entry from `prev` depends on (trailing). */
  endNeeds: TurnoutNeed[]
}

const moveCache = new WeakMap<Topology, Map<string, Map<string, Move>>>()

function moveOf(t: Topology, cur: string, prev: string): Move {
  let byCur = moveCache.get(t)
  if (!byCur) {
    byCur = new Map()
    moveCache.set(t, byCur)
  }
  let byPrev = byCur.get(cur)
  if (!byPrev) {
    byPrev = new Map()
    byCur.set(cur, byPrev)
  }
  let m = byPrev.get(prev)
  if (!m) {
    const cands = onward(t, cur, prev)
    const fork
      = cands.length > 1 ? ((t.turnoutsIn.get(cur) ?? []).find(y => cands.length === 2 && cands.includes(y.normal) && cands.includes(y.reverse)) ?? null) : null
    const steps = new Map<string, { needs: TurnoutNeed[], stop: LayoutSignal | null }>()
    for (const nb of cands) steps.set(nb, { needs: needsThrough(t, cur, prev, nb), stop: t.stopAt.get(placeKey(cur, nb)) ?? null })
    m = { cands, fork, steps, endNeeds: needsThrough(t, cur, prev, null) }
    byPrev.set(prev, m)
  }
  return m
}

function checkNeeds(needs: TurnoutNeed[], pos: PositionOf, s: LayoutSignal, tr: Trace): boolean {
  for (let i = 0; i < needs.length; i++) {
    const n = needs[i]!
    if (legOf(n.turnout, pos(n.turnout.id)) !== n.leg) return false
    if (n.facing && tr.indicator === null && s.indicators && own(s.indicators, n.leg)) tr.indicator = s.indicators[n.leg]!
  }
  return true
}

/** Steps walked before a trace starts watching for a loop with no stop signal on it. */
const LOOP_WATCH_AFTER = 64

/**
 * The section of signal `s` along the route set by the turnouts: from `protects` on, past distant signals,
 * through facing turnouts along the set leg, up to and including the block where the next stop signal stands.
 */
export function traceSection(t: Topology, s: LayoutSignal, pos: PositionOf): Trace {
  // The signal stands at the exit of `from`, beyond any turnout in that block: those do not concern it.
  const tr: Trace = { blocks: [], routeSet: true, next: null, indicator: null }
  let prev = s.from
  let cur = s.protects
  let seen: Set<string> | null = null
  for (let step = 0; ; step++) {
    if (step >= LOOP_WATCH_AFTER) {
      seen ??= new Set()
      const key = placeKey(prev, cur)
      if (seen.has(key)) return tr // the route runs round a loop with no stop signal on it: end of line
      seen.add(key)
    }
    tr.blocks.push(cur)
    const m = moveOf(t, cur, prev)
    let nb: string | null
    if (m.cands.length === 0) {
      if (!checkNeeds(m.endNeeds, pos, s, tr)) tr.routeSet = false
      return tr
    } else if (m.cands.length === 1) nb = m.cands[0]!
    else {
      // a fork: a facing turnout in `cur` chooses (validation makes sure there is one)
      nb = m.fork ? legOf(m.fork, pos(m.fork.id)) : null
      if (nb === null) {
        tr.routeSet = false
        return tr
      }
    }
    const st = m.steps.get(nb)!
    if (!checkNeeds(st.needs, pos, s, tr)) {
      tr.routeSet = false
      return tr
    }
    if (st.stop) {
      tr.next = st.stop
      return tr
    }
    prev = cur
    cur = nb
  }
}

/** Everything the section of `s` can contain over all turnout settings. */
function reachOf(t: Topology, s: LayoutSignal): Reach {
  const r: Reach = { blocks: new Set(), turnouts: new Set(), nexts: new Set(), facingLegs: new Set() }
  if (!t.blockById.has(s.from) || !t.blockById.has(s.protects)) return r
  const seen = new Set<string>()
  const stack: [string, string][] = [[s.from, s.protects]]
  while (stack.length) {
    const [prev, cur] = stack.pop()!
    const key = placeKey(prev, cur)
    if (seen.has(key)) continue
    seen.add(key)
    r.blocks.add(cur)
    for (const x of t.turnoutsIn.get(cur) ?? []) r.turnouts.add(x.id)
    const cands = onward(t, cur, prev)
    for (const nb of cands) {
      for (const n of needsThrough(t, cur, prev, nb)) if (n.facing) r.facingLegs.add(n.leg)
      const sig = t.stopAt.get(placeKey(cur, nb))
      if (sig) r.nexts.add(sig.id)
      else stack.push([cur, nb])
    }
  }
  return r
}
