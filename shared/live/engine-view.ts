import { turnoutLocks, type Engine, type Layout } from '#shared/signalling'
import type { LiveState } from '#shared/live/protocol'

/**
 * What the Panel's diagram draws, from an engine running in the browser (the editor's "Try it", the
 * read-only view of a saved version): the same shape the server sends in a snapshot.
 */
export function liveStateOf(engine: Engine, layout: Layout): LiveState {
  const s = engine.state()
  return {
    occupied: s.occupied, turnouts: s.turnouts, overrides: s.overrides, descriptions: s.descriptions, alarms: s.alarms,
    indications: engine.indications(), signalRevisions: s.signalRevisions, turnoutRevisions: s.turnoutRevisions, dropouts: {},
    locks: turnoutLocks(layout, s, engine.indications()),
  }
}
