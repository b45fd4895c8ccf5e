import type { Layout, LayoutSignal } from '../schemas/layout'
import { IndicationReader, computeIndications, sameIndication } from './aspects'
import { lockOf } from './locking'
import { scaleSpeed } from './scale'
import { isLeg, legOf, own, placeKey, topologyOf, type Topology } from './topology'
import type {
  Alarm,
  Change,
  ErrorChange,
  Indication,
  LayoutEvent,
  LayoutState,
  OverrideMode,
  TurnoutPosition,
} from './types'
import { OVERRIDE_MODES, TURNOUT_POSITIONS } from './values'

/** Longest train description accepted by interpose. */
export const MAX_DESCRIPTION_LENGTH = 16

/** All blocks free, detectors clear, turnouts unknown, overrides auto, no descriptions, no alarms. */
export function initialState(layout: Layout): LayoutState {
  const topo = topologyOf(layout)
  const state: LayoutState = {
    revision: 0,
    detectors: {},
    occupied: {},
    enteredAt: {},
    turnouts: {},
    overrides: {},
    descriptions: {},
    alarms: [],
    signalRevisions: {},
    turnoutRevisions: {},
    alarmCount: 0,
  }
  for (const b of topo.blockIds) state.occupied[b] = false
  for (const d of topo.detectorIds) state.detectors[d] = false
  for (const t of topo.turnoutIds) {
    state.turnouts[t] = 'unknown'
    state.turnoutRevisions[t] = 0
  }
  for (const s of topo.signalIds) {
    state.overrides[s] = 'auto'
    state.signalRevisions[s] = 0
  }
  return state
}

type MapKey = Exclude<keyof LayoutState, 'revision' | 'alarmCount' | 'alarms'>

/** Copies a map that holds one entry per id of the layout, in layout order (faster than a spread for big maps). */
function copyByKeys<V>(src: Record<string, V>, keys: string[]): Record<string, V> {
  const c: Record<string, V> = {}
  for (let i = 0; i < keys.length; i++) {
    const k = keys[i]!
    const v = src[k]
    if (v !== undefined) c[k] = v
  }
  return c
}

/**
 * Write access to the state during one event, and the signal indications before and after it.
 * `copy` mode (applyEvent) copies each map before its first write and leaves the input untouched, and works
 * out indications before the event from the input state; `inPlace` mode (createEngine) writes into the state
 * it holds and keeps the indications in a map of its own.
 */
class Draft {
  readonly base: LayoutState
  readonly next: LayoutState
  private readonly copied = new Set<string>()
  private readonly topo: Topology
  private readonly live: Record<string, Indication> | null
  private beforeReader: IndicationReader | null = null

  constructor(topo: Topology, base: LayoutState, live: Record<string, Indication> | null) {
    this.topo = topo
    this.base = base
    this.live = live
    this.next = live ? base : { ...base }
  }

  map<K extends MapKey>(k: K): LayoutState[K] {
    if (!this.live && !this.copied.has(k)) {
      this.copied.add(k)
      const src = this.next[k] as Record<string, unknown>
      const keys
        = k === 'occupied' ? this.topo.blockIds : k === 'detectors' ? this.topo.detectorIds : k === 'turnouts' || k === 'turnoutRevisions' ? this.topo.turnoutIds : k === 'overrides' || k === 'signalRevisions' ? this.topo.signalIds : null
      ;(this.next as unknown as Record<string, unknown>)[k] = copyByKeys(src, keys ?? Object.keys(src))
    }
    return this.next[k]
  }

  alarms(): Alarm[] {
    if (!this.live && !this.copied.has('alarms')) {
      this.copied.add('alarms')
      this.next.alarms = this.next.alarms.slice()
    }
    return this.next.alarms
  }

  /** The indication a signal showed just before this event. */
  before(signal: LayoutSignal): Indication {
    if (this.live) {
      const i = this.live[signal.id]
      if (i) return i
    }
    this.beforeReader ??= new IndicationReader(this.topo, this.base)
    return this.beforeReader.indication(signal)
  }

  record(signal: string, now: Indication): void {
    if (this.live) this.live[signal] = now
  }
}

const isTurnoutPosition = (v: unknown): v is TurnoutPosition => (TURNOUT_POSITIONS as readonly unknown[]).includes(v)
const isOverrideMode = (v: unknown): v is OverrideMode => (OVERRIDE_MODES as readonly unknown[]).includes(v)

const invalid = (path: string, message: string): ErrorChange => ({ type: 'error', code: 'invalid-event', path, message })
const unknown = (path: string, message: string): ErrorChange => ({ type: 'error', code: 'unknown-id', path, message })

function checkEvent(event: unknown): ErrorChange | null {
  if (typeof event !== 'object' || event === null) return invalid('', 'an event is an object with a type')
  const e = event as Record<string, unknown>
  if (typeof e.at !== 'number' || !Number.isFinite(e.at)) return invalid('at', 'at must be a time in epoch milliseconds')
  if (e.by !== undefined && typeof e.by !== 'string') return invalid('by', 'by must be a string')
  switch (e.type) {
    case 'detector':
      if (typeof e.detector !== 'string') return invalid('detector', 'detector must be a detector id')
      if (typeof e.occupied !== 'boolean') return invalid('occupied', 'occupied must be true or false')
      return null
    case 'turnout':
      if (typeof e.turnout !== 'string') return invalid('turnout', 'turnout must be a turnout id')
      if (!isTurnoutPosition(e.position)) return invalid('position', 'position must be normal, reverse or unknown')
      return null
    case 'override':
      if (typeof e.signal !== 'string') return invalid('signal', 'signal must be a signal id')
      if (!isOverrideMode(e.mode)) return invalid('mode', 'mode must be hold, auto or clear')
      return null
    case 'interpose':
      if (typeof e.block !== 'string') return invalid('block', 'block must be a block id')
      if (typeof e.description !== 'string') return invalid('description', 'description must be a string')
      if (e.description.trim().length > MAX_DESCRIPTION_LENGTH)
        return invalid('description', `a train description is at most ${MAX_DESCRIPTION_LENGTH} characters`)
      return null
    case 'acknowledge':
      if (typeof e.alarm !== 'string') return invalid('alarm', 'alarm must be an alarm id')
      return null
    default:
      return invalid('type', 'type must be detector, turnout, override, interpose or acknowledge')
  }
}

/**
 * The block an entering train came from: among the occupied blocks with a link into `block`, prefer one whose
 * link is not set against by a turnout, then the one entered most recently (the moving train), then link order.
 */
function enteringFrom(topo: Topology, state: LayoutState, block: string): string | null {
  let best: string | null = null
  let bestAgainst = true
  let bestAt = -Infinity
  for (const p of topo.inc.get(block) ?? []) {
    if (state.occupied[p] !== true) continue
    const against = setAgainst(topo, state, p, block)
    const at = own(state.enteredAt, p) ? state.enteredAt[p]! : -Infinity
    if (best === null || (bestAgainst && !against) || (against === bestAgainst && at > bestAt)) {
      best = p
      bestAgainst = against
      bestAt = at
    }
  }
  return best
}

/** True when a turnout with a known position is set so that a train cannot run from `p` into `x`. */
function setAgainst(topo: Topology, state: LayoutState, p: string, x: string): boolean {
  for (const t of topo.turnoutsIn.get(p) ?? []) {
    if (isLeg(t, x)) {
      const leg = legOf(t, state.turnouts[t.id] ?? 'unknown')
      if (leg !== null && leg !== x) return true
    }
  }
  for (const t of topo.turnoutsIn.get(x) ?? []) {
    if (isLeg(t, p)) {
      const leg = legOf(t, state.turnouts[t.id] ?? 'unknown')
      if (leg !== null && leg !== p) return true
    }
  }
  return false
}

/** Recomputes the signals the event can have changed and records the indications that did change. */
function refresh(topo: Topology, draft: Draft, seeds: Iterable<string>, changes: Change[]): void {
  const affected = new Set<string>()
  const level1: string[] = []
  for (const s of seeds) {
    if (!affected.has(s)) {
      affected.add(s)
      level1.push(s)
    }
  }
  // signals reading an affected signal as their next, and four-aspect signals two steps behind
  const level2: string[] = []
  for (const s of level1) {
    for (const r of topo.rearOf.get(s) ?? []) {
      if (!affected.has(r)) {
        affected.add(r)
        level2.push(r)
      }
    }
  }
  for (const s of level2) {
    for (const r of topo.rearOf.get(s) ?? []) {
      if (!affected.has(r) && topo.signalById.get(r)!.kind === 'four-aspect') affected.add(r)
    }
  }
  const order = [...affected].sort((a, b) => topo.signalOrder.get(a)! - topo.signalOrder.get(b)!)
  const reader = new IndicationReader(topo, draft.next)
  for (const id of order) {
    const sig = topo.signalById.get(id)!
    const before = draft.before(sig)
    const now = reader.indication(sig)
    if (!sameIndication(before, now)) {
      draft.record(id, now)
      changes.push({ type: 'indication', signal: id, indication: now, previous: before })
    }
  }
}

function byOf(e: { by?: string }): { by?: string } {
  return typeof e.by === 'string' ? { by: e.by } : {}
}

function run(layout: Layout, draft: Draft, event: LayoutEvent): Change[] {
  const bad = checkEvent(event)
  if (bad) return [bad]
  const topo = topologyOf(layout)
  const base = draft.base
  const changes: Change[] = []
  const at = event.at
  switch (event.type) {
    case 'detector': {
      const block = topo.detectorBlock.get(event.detector)
      if (block === undefined) return [unknown('detector', `unknown detector "${event.detector}"`)]
      if ((base.detectors[event.detector] === true) === event.occupied) return []
      draft.map('detectors')[event.detector] = event.occupied
      changes.push({ type: 'detector', detector: event.detector, block, occupied: event.occupied, at })
      const dets = topo.blockById.get(block)!.detectors
      const occupied = dets.some(d => draft.next.detectors[d] === true)
      if (occupied !== (base.occupied[block] === true)) {
        changes.push({ type: 'block', block, occupied, at })
        if (occupied) enterBlock(topo, layout, draft, block, at, changes)
        else leaveBlock(topo, draft, block, at, changes)
        refresh(topo, draft, topo.signalsByBlock.get(block) ?? [], changes)
      }
      break
    }
    case 'turnout': {
      const t = topo.turnoutById.get(event.turnout)
      if (!t) return [unknown('turnout', `unknown turnout "${event.turnout}"`)]
      if (base.turnouts[t.id] === event.position) return []
      // judged on the state just before the move: the move itself is a fact and is applied all the same. A first
      // report (from unknown) is not a move: it says where the turnout lies, as after a start-up.
      const lock = base.turnouts[t.id] === 'unknown'
        ? null
        : lockOf(topo, t.id, {
            occupied: b => base.occupied[b] === true,
            position: id => base.turnouts[id] ?? 'unknown',
            aspect: id => draft.before(topo.signalById.get(id)!).aspect,
          })
      draft.map('turnouts')[t.id] = event.position
      const revision = (base.turnoutRevisions[t.id] ?? 0) + 1
      draft.map('turnoutRevisions')[t.id] = revision
      changes.push({ type: 'turnout', turnout: t.id, position: event.position, revision, at, ...byOf(event) })
      if (lock) {
        const n = base.alarmCount + 1
        const description = own(base.descriptions, t.block) ? base.descriptions[t.block]! : null
        const alarm: Alarm = {
          id: `lock-${n}`, kind: 'turnout-under-lock', turnout: t.id, block: t.block,
          signal: lock.reason === 'route' ? lock.signal : null, description, at, acknowledgedAt: null,
        }
        draft.next.alarmCount = n
        draft.alarms().push(alarm)
        changes.push({ type: 'alarm', alarm })
      }
      refresh(topo, draft, topo.signalsByTurnout.get(t.id) ?? [], changes)
      break
    }
    case 'override': {
      const s = topo.signalById.get(event.signal)
      if (!s) return [unknown('signal', `unknown signal "${event.signal}"`)]
      if ((base.overrides[s.id] ?? 'auto') === event.mode) return []
      draft.map('overrides')[s.id] = event.mode
      const revision = (base.signalRevisions[s.id] ?? 0) + 1
      draft.map('signalRevisions')[s.id] = revision
      changes.push({ type: 'override', signal: s.id, mode: event.mode, revision, at, ...byOf(event) })
      refresh(topo, draft, [s.id], changes)
      break
    }
    case 'interpose': {
      if (!topo.blockById.has(event.block)) return [unknown('block', `unknown block "${event.block}"`)]
      const text = event.description.trim()
      const had = own(base.descriptions, event.block) ? base.descriptions[event.block]! : null
      if (text === '') {
        if (had === null) return []
        delete draft.map('descriptions')[event.block]
        changes.push({ type: 'description', block: event.block, description: null, reason: 'clear', at, ...byOf(event) })
      } else {
        if (had === text) return []
        draft.map('descriptions')[event.block] = text
        changes.push({ type: 'description', block: event.block, description: text, reason: 'interpose', at, ...byOf(event) })
      }
      break
    }
    case 'acknowledge': {
      const i = base.alarms.findIndex(a => a.id === event.alarm)
      if (i < 0) return [unknown('alarm', `unknown alarm "${event.alarm}"`)]
      const a = base.alarms[i]!
      if (a.acknowledgedAt !== null)
        return [{ type: 'error', code: 'already-acknowledged', path: 'alarm', message: `alarm "${a.id}" is already acknowledged` }]
      const acked: Alarm = { ...a, acknowledgedAt: at, ...(typeof event.by === 'string' ? { acknowledgedBy: event.by } : {}) }
      draft.alarms()[i] = acked
      changes.push({ type: 'alarm-acknowledged', alarm: acked })
      break
    }
  }
  draft.next.revision = base.revision + 1
  return changes
}

function enterBlock(topo: Topology, layout: Layout, draft: Draft, block: string, at: number, changes: Change[]): void {
  const base = draft.base
  const from = enteringFrom(topo, base, block)
  const description = from !== null && own(base.descriptions, from) ? base.descriptions[from]! : null
  if (from !== null) {
    // signal passed at danger: judged on what the signal showed just before this event
    const sig = topo.stopAt.get(placeKey(from, block))
    if (sig && draft.before(sig).aspect === 'danger') {
      const n = base.alarmCount + 1
      const alarm: Alarm = { id: `spad-${n}`, kind: 'spad', signal: sig.id, block, description, at, acknowledgedAt: null }
      draft.next.alarmCount = n
      draft.alarms().push(alarm)
      changes.push({ type: 'alarm', alarm })
    }
  }
  if (from !== null && description !== null) {
    draft.map('descriptions')[block] = description
    changes.push({ type: 'description', block, description, reason: 'step', from, at })
    if (own(base.enteredAt, from)) {
      const seconds = (at - base.enteredAt[from]!) / 1000
      const lengthMm = topo.blockById.get(from)!.lengthMm
      if (seconds > 0) {
        const { kmh, mph } = scaleSpeed({ lengthMm, seconds, ratio: layout.scale.ratio })
        changes.push({ type: 'speed', block: from, description, lengthMm, seconds, kmh, mph, at })
      }
    }
  }
  draft.map('occupied')[block] = true
  draft.map('enteredAt')[block] = at
}

function leaveBlock(topo: Topology, draft: Draft, block: string, at: number, changes: Change[]): void {
  const enteredAt = own(draft.next.enteredAt, block) ? draft.next.enteredAt[block]! : -Infinity
  draft.map('occupied')[block] = false
  delete draft.map('enteredAt')[block]
  if (!own(draft.next.descriptions, block)) return
  const description = draft.next.descriptions[block]!
  delete draft.map('descriptions')[block]
  const ahead = describedElsewhere(draft.next, description) ? null : occupiedUndescribedAhead(topo, draft.next, block, enteredAt)
  if (ahead !== null) {
    draft.map('descriptions')[ahead] = description
    changes.push({ type: 'description', block: ahead, description, reason: 'step', from: block, at })
  }
  const lost = ahead === null && !describedElsewhere(draft.next, description)
  changes.push({ type: 'description', block, description: null, reason: lost ? 'lost' : 'clear', ...(lost ? { lost: description } : {}), at })
}

function describedElsewhere(state: LayoutState, description: string): boolean {
  for (const b in state.descriptions) if (state.descriptions[b] === description) return true
  return false
}

/**
 * Berth stepping when the rear of a train clears (docs/sources.md §5, CA Berth Step, with occupancy as the
 * stepping condition): the block ahead of `block` on the set route that is occupied and has no description
 * (the front of a train standing across both), entered no earlier than `block` itself was. Among several,
 * the one entered most recently.
 */
function occupiedUndescribedAhead(topo: Topology, state: LayoutState, block: string, enteredAt: number): string | null {
  let best: string | null = null
  let bestAt = -Infinity
  for (const x of topo.out.get(block) ?? []) {
    if (state.occupied[x] !== true || own(state.descriptions, x) || setAgainst(topo, state, block, x)) continue
    const at = own(state.enteredAt, x) ? state.enteredAt[x]! : -Infinity
    if (at < enteredAt && at !== -Infinity) continue
    if (best === null || at > bestAt) {
      best = x
      bestAt = at
    }
  }
  return best
}

/**
 * Applies one event to a layout state. Pure: the input state is not changed; the returned state shares the
 * parts the event did not touch. An event that names an unknown id or is malformed returns one error change
 * and the input state itself.
 */
export function applyEvent(layout: Layout, state: LayoutState, event: LayoutEvent): { state: LayoutState, changes: Change[] } {
  const draft = new Draft(topologyOf(layout), state, null)
  const changes = run(layout, draft, event)
  if (changes.length === 0 && draft.next.revision === state.revision) return { state, changes }
  if (changes.length === 1 && changes[0]!.type === 'error') return { state, changes }
  return { state: draft.next, changes }
}

export interface Engine {
  /** Applies one event in place and returns what changed (the same changes applyEvent returns). */
  apply(event: LayoutEvent): Change[]
  /** The live state. Read-only: copy it (structuredClone) to keep a snapshot. */
  state(): LayoutState
  /** Current indication of every signal, kept up to date. Read-only. */
  indications(): Record<string, Indication>
}

/**
 * The live variant for the server: keeps one state and the indications and updates them in place. The
 * per-layout lookups (which signals depend on which block and turnout) are built once, so an event costs
 * what it touches, not the size of the layout. A given state is copied first.
 */
export function createEngine(layout: Layout, state?: LayoutState): Engine {
  const topo = topologyOf(layout)
  const current: LayoutState = state ? structuredClone(state) : initialState(layout)
  const indications = computeIndications(layout, current)
  return {
    apply(event) {
      return run(layout, new Draft(topo, current, indications), event)
    },
    state: () => current,
    indications: () => indications,
  }
}
