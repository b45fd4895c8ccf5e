import type { Layout } from '../schemas/layout'
import type { AreaHolders, DeviceStatus, FeedEntry, HandOverOffers, UnattendedAreas, LiveChange, LiveSession, LiveState, LiveUser, ServerMessage } from './protocol'

/**
 * What a panel knows about one layout, built only from the server's messages: a `snapshot` replaces it,
 * each `delta` updates it in `seq` order. These functions change the view in place (so a reactive store
 * wrapping it re-renders only what a delta touched) and do no I/O.
 */
export interface PanelView {
  /** Slug of the layout the view shows; null before the first snapshot. */
  layout: string | null
  /** `seq` of the last snapshot or delta applied; -1 before the first snapshot. */
  seq: number
  definition: Layout | null
  state: LiveState
  areas: AreaHolders
  unattended: UnattendedAreas
  offers: HandOverOffers
  operators: LiveUser[]
  devices: Record<string, DeviceStatus>
  session: LiveSession | null
  feed: FeedEntry[]
  /** The server's clock (epoch ms) when the last snapshot was made: clocks shown are worked out from it. */
  serverTime: number | null
}

export type SnapshotMessage = Extract<ServerMessage, { type: 'snapshot' }>
export type DeltaMessage = Extract<ServerMessage, { type: 'delta' }>

/** How many feed entries a panel keeps (newest last). */
export const FEED_LIMIT = 50

function emptyState(): LiveState {
  return {
    occupied: {}, turnouts: {}, overrides: {}, descriptions: {}, alarms: [], indications: {},
    signalRevisions: {}, turnoutRevisions: {}, dropouts: {}, locks: {},
  }
}

export function emptyView(): PanelView {
  return { layout: null, seq: -1, definition: null, state: emptyState(), areas: {}, unattended: {}, offers: {}, operators: [], devices: {}, session: null, feed: [], serverTime: null }
}

/**
 * Replaces the whole view with a snapshot. Applying the same snapshot again gives the same view, and the
 * view never shares objects with the message (later deltas do not change the message).
 * The definition is frozen: it is read-only, and a reactive store then leaves it unwrapped.
 */
export function applySnapshot(view: PanelView, msg: SnapshotMessage): void {
  view.layout = msg.layout
  view.seq = msg.seq
  view.definition = Object.isFrozen(msg.definition) ? msg.definition : Object.freeze(structuredClone(msg.definition))
  view.state = { ...emptyState(), ...structuredClone(msg.state) }
  view.areas = structuredClone(msg.areas)
  view.unattended = { ...msg.unattended }
  view.offers = structuredClone(msg.offers ?? {})
  view.operators = structuredClone(msg.operators)
  view.devices = structuredClone(msg.devices)
  view.session = msg.session ? { ...msg.session } : null
  view.feed = msg.feed.slice(-FEED_LIMIT).map(e => ({ ...e }))
  view.serverTime = Number.isFinite(msg.serverTime) ? msg.serverTime : null
}

/**
 * - applied: the delta was the next one and is now in the view;
 * - duplicate: its seq is not newer than the view (already applied, or older than the snapshot): ignored;
 * - gap: one or more deltas are missing: nothing was applied, ask the server to `resync`;
 * - not-ready: no snapshot yet, or the delta is for another layout: ignored.
 */
export type DeltaOutcome = 'applied' | 'duplicate' | 'gap' | 'not-ready'

export function applyDelta(view: PanelView, msg: DeltaMessage): DeltaOutcome {
  if (view.layout === null || view.seq < 0 || msg.layout !== view.layout) return 'not-ready'
  if (msg.seq <= view.seq) return 'duplicate'
  if (msg.seq !== view.seq + 1) return 'gap'
  for (const change of msg.changes) applyChange(view, change)
  view.seq = msg.seq
  return 'applied'
}

function upsertAlarm(state: LiveState, alarm: LiveState['alarms'][number]): void {
  const i = state.alarms.findIndex(a => a.id === alarm.id)
  if (i < 0) state.alarms.push({ ...alarm })
  else state.alarms[i] = { ...alarm }
}

/** Applies one change of a delta. Changes that carry nothing a panel shows (detector, speed, error) are skipped. */
function applyChange(view: PanelView, change: LiveChange): void {
  const s = view.state
  switch (change.type) {
    case 'block': s.occupied[change.block] = change.occupied; break
    case 'indication': s.indications[change.signal] = { ...change.indication }; break
    case 'turnout':
      s.turnouts[change.turnout] = change.position
      s.turnoutRevisions[change.turnout] = change.revision
      break
    case 'override':
      s.overrides[change.signal] = change.mode
      s.signalRevisions[change.signal] = change.revision
      break
    case 'description':
      if (change.description === null) delete s.descriptions[change.block]
      else s.descriptions[change.block] = change.description
      break
    case 'alarm':
    case 'alarm-acknowledged':
      upsertAlarm(s, change.alarm)
      break
    case 'dropout': s.dropouts[change.block] = change.at; break
    case 'lock':
      if (change.lock) s.locks[change.turnout] = { ...change.lock }
      else delete s.locks[change.turnout]
      break
    case 'areas': view.areas = structuredClone(change.areas); break
    case 'unattended': view.unattended = { ...change.areas }; break
    case 'offers': view.offers = structuredClone(change.offers); break
    case 'operators': view.operators = structuredClone(change.operators); break
    case 'device': view.devices[change.device] = { ...change.status }; break
    case 'session': view.session = change.session ? { ...change.session } : null; break
    case 'feed':
      view.feed.push({ ...change.entry })
      if (view.feed.length > FEED_LIMIT) view.feed.splice(0, view.feed.length - FEED_LIMIT)
      break
    default: break
  }
}
