import type { Layout } from '#shared/schemas/layout'
import { initialState, type LayoutState } from '#shared/signalling'
import type { AreaHolders } from '#shared/live/protocol'

/**
 * The live state a reloaded layout starts from: what the running layout knew about every detector, block,
 * turnout, signal and berth that the new version still has (matched by id); anything new starts as at power-on.
 * Alarms are kept only where their signal still exists.
 */
export function carryState(previous: LayoutState, layout: Layout): LayoutState {
  const next = initialState(layout)
  for (const d of Object.keys(next.detectors)) if (d in previous.detectors) next.detectors[d] = previous.detectors[d]!
  // a block is occupied while any of its detectors is: recompute from the detectors it has now
  for (const b of layout.blocks) {
    next.occupied[b.id] = b.detectors.some(d => next.detectors[d])
    if (next.occupied[b.id] && previous.enteredAt[b.id] !== undefined) next.enteredAt[b.id] = previous.enteredAt[b.id]!
    else if (next.occupied[b.id]) next.enteredAt[b.id] = Date.now()
    const description = previous.descriptions[b.id]
    if (next.occupied[b.id] && description !== undefined) next.descriptions[b.id] = description
  }
  for (const t of Object.keys(next.turnouts)) {
    if (t in previous.turnouts) {
      next.turnouts[t] = previous.turnouts[t]!
      next.turnoutRevisions[t] = previous.turnoutRevisions[t] ?? 0
    }
  }
  for (const s of Object.keys(next.overrides)) {
    if (s in previous.overrides) {
      next.overrides[s] = previous.overrides[s]!
      next.signalRevisions[s] = previous.signalRevisions[s] ?? 0
    }
  }
  // keep alarms whose signal and turnout the new version still has
  next.alarms = previous.alarms.filter(a => (a.signal === null || a.signal in next.overrides) && (a.kind !== 'turnout-under-lock' || a.turnout in next.turnouts))
  next.alarmCount = previous.alarmCount
  next.revision = previous.revision
  return next
}

/** Area holders of the areas the new version still has. */
export function carryAreas(previous: AreaHolders, layout: Layout): AreaHolders {
  return Object.fromEntries(layout.areas.map(a => [a.id, previous[a.id] ?? null]))
}
