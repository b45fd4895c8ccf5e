import type { Layout } from '../schemas/layout'
import { IndicationReader } from './aspects'
import { isStop, topologyOf, traceSection, type Topology } from './topology'
import type { Aspect, LayoutState, TurnoutPosition } from './types'

/**
 * Turnout locking (interlocking): a turnout may not be thrown
 * - while its block is occupied (track locking), checked first;
 * - while a stop signal whose section, as the turnouts now lie, includes the turnout's block shows anything
 *   but danger (route locking). Distant signals lock nothing.
 */
export type TurnoutLock = null | { reason: 'occupied', block: string } | { reason: 'route', signal: string }

/** What locking looks at: occupancy, where the turnouts lie, and what each signal shows. */
export interface LockInputs {
  occupied: (block: string) => boolean
  position: (turnout: string) => TurnoutPosition
  aspect: (signal: string) => Aspect
}

/** The lock on a turnout the topology knows, judged on `inputs`. */
export function lockOf(topo: Topology, turnoutId: string, inputs: LockInputs): TurnoutLock {
  const t = topo.turnoutById.get(turnoutId)
  if (!t) throw new RangeError(`unknown turnout "${turnoutId}"`)
  if (inputs.occupied(t.block)) return { reason: 'occupied', block: t.block }
  for (const id of topo.signalsByBlock.get(t.block) ?? []) {
    const s = topo.signalById.get(id)!
    if (!isStop(s) || inputs.aspect(id) === 'danger') continue
    if (traceSection(topo, s, inputs.position).blocks.includes(t.block)) return { reason: 'route', signal: id }
  }
  return null
}

/**
 * Whether `turnoutId` may be thrown in `state`: null when it may, else why not. Pure. An unknown turnout id
 * throws a RangeError.
 */
export function turnoutLock(layout: Layout, state: LayoutState, turnoutId: string): TurnoutLock {
  const topo = topologyOf(layout)
  if (!topo.turnoutById.has(turnoutId)) throw new RangeError(`unknown turnout "${turnoutId}"`)
  const reader = new IndicationReader(topo, state)
  return lockOf(topo, turnoutId, {
    occupied: b => state.occupied[b] === true,
    position: id => state.turnouts[id] ?? 'unknown',
    aspect: id => reader.indication(topo.signalById.get(id)!).aspect,
  })
}

/** Every locked turnout of the layout in `state`, by id (free turnouts are left out). */
export function turnoutLocks(layout: Layout, state: LayoutState, aspects: Record<string, { aspect: Aspect }>): Record<string, NonNullable<TurnoutLock>> {
  const topo = topologyOf(layout)
  const inputs: LockInputs = {
    occupied: b => state.occupied[b] === true,
    position: id => state.turnouts[id] ?? 'unknown',
    aspect: id => aspects[id]?.aspect ?? 'danger',
  }
  const out: Record<string, NonNullable<TurnoutLock>> = {}
  for (const id of topo.turnoutIds) {
    const lock = lockOf(topo, id, inputs)
    if (lock) out[id] = lock
  }
  return out
}

/**
 * Turnouts whose lock a set of engine changes can have changed: those in a block whose occupancy changed, and
 * those a signal whose indication changed, or whose route a moved turnout changes, can read over.
 */
export function turnoutsTouchedBy(layout: Layout, changes: readonly { type: string, block?: string, signal?: string, turnout?: string }[]): Set<string> {
  const topo = topologyOf(layout)
  const out = new Set<string>()
  const fromSignal = (id: string) => { for (const t of topo.reach.get(id)?.turnouts ?? []) out.add(t) }
  for (const c of changes) {
    if (c.type === 'block' && c.block) for (const t of topo.turnoutsIn.get(c.block) ?? []) out.add(t.id)
    else if (c.type === 'indication' && c.signal) fromSignal(c.signal)
    else if (c.type === 'turnout' && c.turnout) {
      out.add(c.turnout)
      for (const s of topo.signalsByTurnout.get(c.turnout) ?? []) fromSignal(s)
    }
  }
  return out
}
