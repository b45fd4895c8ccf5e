// Live protocol messages for panel tests, made by running the real signalling engine over the demo layout
// (Wrenfold Junction, an invented scenario). People are the invented Fernhollow Light Railway demo accounts.
import demo from '#shared/layouts/demo-layout.json'
import { applyEvent, computeIndications, initialState, validateLayout } from '#shared/signalling'
import type { Change, Layout, LayoutEvent, LayoutState } from '#shared/signalling'
import type { AreaHolders, DeviceStatus, FeedEntry, LiveChange, LiveSession, LiveState, LiveUser } from '#shared/live/protocol'
import type { DeltaMessage, SnapshotMessage } from '#shared/live/apply'

export const SLUG = 'wrenfold'
export const ADA: LiveUser = { id: 1, name: 'Ada Wrenfield', role: 'admin' }
export const TAM: LiveUser = { id: 2, name: 'Tam Oakridge', role: 'signaller' }
export const RHEA: LiveUser = { id: 3, name: 'Rhea Lintwhistle', role: 'signaller' }
export const MILO: LiveUser = { id: 4, name: 'Milo Brackenby', role: 'viewer' }

export function demoLayout(): Layout {
  const r = validateLayout(demo)
  if (!r.ok) throw new Error(JSON.stringify(r.errors))
  return r.layout
}

export function detectorOf(layout: Layout, block: string): string {
  return layout.blocks.find(b => b.id === block)!.detectors[0]!
}

/** The engine state as the protocol's LiveState carries it, with the indications the engine computes for it. */
export function toLiveState(layout: Layout, s: LayoutState, dropouts: Record<string, number> = {}): LiveState {
  return structuredClone({
    occupied: s.occupied, turnouts: s.turnouts, overrides: s.overrides, descriptions: s.descriptions, alarms: s.alarms,
    indications: computeIndications(layout, s), signalRevisions: s.signalRevisions, turnoutRevisions: s.turnoutRevisions, dropouts,
  })
}

type EventInput = LayoutEvent extends infer E ? E extends LayoutEvent ? Omit<E, 'at'> : never : never

/** Drives the engine and numbers its changes as a server would: one delta per event. */
export class DemoRun {
  readonly layout = demoLayout()
  state: LayoutState = initialState(this.layout)
  seq = 0
  at = 1_767_000_000_000
  areas: AreaHolders = { main: null, branch: null }
  operators: LiveUser[] = [ADA, TAM, RHEA, MILO]
  devices: Record<string, DeviceStatus> = {}
  session: LiveSession | null = null
  feed: FeedEntry[] = []

  /** Starts with every turnout reported normal (as the fake layout does at start-up), so the signals can clear. */
  constructor() {
    for (const t of this.layout.turnouts) {
      this.state = applyEvent(this.layout, this.state, { type: 'turnout', turnout: t.id, position: 'normal', at: this.at }).state
    }
  }

  snapshot(): SnapshotMessage {
    return {
      type: 'snapshot', layout: SLUG, seq: this.seq, definition: this.layout, state: this.liveState(),
      areas: structuredClone(this.areas), operators: structuredClone(this.operators), devices: structuredClone(this.devices),
      session: this.session, feed: structuredClone(this.feed), serverTime: this.at,
    }
  }

  liveState(): LiveState {
    return toLiveState(this.layout, this.state)
  }

  /** Applies events to the engine and returns one delta with all their changes. */
  event(...events: EventInput[]): DeltaMessage {
    const changes: Change[] = []
    for (const e of events) {
      this.at += 1000
      const r = applyEvent(this.layout, this.state, { ...e, at: this.at } as LayoutEvent)
      this.state = r.state
      changes.push(...r.changes)
    }
    return this.delta(changes)
  }

  delta(changes: LiveChange[]): DeltaMessage {
    this.seq += 1
    return { type: 'delta', layout: SLUG, seq: this.seq, changes: structuredClone(changes) }
  }

  occupy(block: string, occupied = true): DeltaMessage {
    return this.event({ type: 'detector', detector: detectorOf(this.layout, block), occupied })
  }

  hold(signal: string): DeltaMessage {
    return this.event({ type: 'override', signal, mode: 'hold' })
  }

  interpose(block: string, description: string): DeltaMessage {
    return this.event({ type: 'interpose', block, description })
  }
}

/**
 * A train described 1F42 (a headcode of the usual form, REFERENCES.md §5) enters the up approach from fiddle
 * road 1 and runs towards Quillbury while SU2 (Quillbury up starter) is held: it passes SU2 at danger.
 */
export function spadRun(): { run: DemoRun, deltas: DeltaMessage[] } {
  const run = new DemoRun()
  const deltas = [
    run.occupy('FY1'),
    run.interpose('FY1', '1F42'),
    run.occupy('UM1'),
    run.occupy('FY1', false),
    run.occupy('UM2'),
    run.occupy('UM1', false),
    run.hold('SU2'),
    run.occupy('UM3'),
  ]
  return { run, deltas }
}
