// Live protocol messages for panel tests, made by the server's own LayoutRuntime over the demo layout
// (Wrenfold Junction, an invented scenario). People are the invented Fernhollow Light Railway demo accounts.
import demo from '#shared/layouts/demo-layout.json'
import { validateLayout } from '#shared/signalling'
import type { Layout, LayoutEvent, LayoutState } from '#shared/signalling'
import type { AreaHolders, DeviceStatus, LiveChange, LiveSession, LiveState, LiveUser } from '#shared/live/protocol'
import { areaOfBlock, areaOfSignal } from '#shared/live/rights'
import { LayoutRuntime, type CommandOutcome } from '../../server/live/runtime'
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

type EventInput = LayoutEvent extends infer E ? E extends LayoutEvent ? Omit<E, 'at'> : never : never

export interface DemoRunOptions {
  /** An operating session running when the panel connects. */
  session?: LiveSession | null
}

/**
 * The demo layout driven through the server's own `LayoutRuntime` (engine, areas, feed, delta numbering),
 * with the journal and MQTT kept in memory. Each step returns the delta the runtime broadcast for it, and
 * `snapshot()` is the runtime's own snapshot: panel tests see exactly what a server sends.
 * Operator steps (hold, interpose, acknowledge) are made by the holder of the item's area; when the area is
 * free, Ada (an admin) takes it first, within the same step.
 */
/** The fixture's server clock at the start of a run (a fixed instant, unlike the test machine's clock). */
export const DEMO_RUN_START = 1_767_000_000_000

export class DemoRun {
  readonly layout = demoLayout()
  readonly runtime: LayoutRuntime
  readonly deltas: DeltaMessage[] = []
  readonly published: { topic: string, payload: string, retain: boolean }[] = []
  at = DEMO_RUN_START

  /** Starts with every turnout reported normal (as the fake layout does at start-up), so the signals can clear. */
  constructor(options: DemoRunOptions = {}) {
    this.runtime = new LayoutRuntime({
      layoutId: 1, slug: SLUG, layout: this.layout, debounceMs: 0, now: () => this.at, session: options.session ?? null,
      publish: (topic, payload, retain) => this.published.push({ topic, payload, retain }),
      journal: { append: () => {} },
      broadcast: (m) => { if (m.type === 'delta') this.deltas.push(m) },
    })
    this.step(() => {
      for (const user of [ADA, TAM, RHEA, MILO]) this.runtime.connect(user)
      for (const t of this.layout.turnouts) this.runtime.turnoutReport(t.id, 'normal', this.at)
    })
  }

  private handMade = 0

  get seq(): number { return (this.deltas.at(-1)?.seq ?? 0) + this.handMade }
  get state(): LayoutState { return this.runtime.state() }
  get operators(): LiveUser[] { return this.runtime.operators() }

  /** Connects and disconnects panels so that exactly these people are connected. */
  set operators(people: LiveUser[]) {
    const now = this.runtime.operators()
    if (now.length === people.length && now.every(o => people.some(p => p.id === o.id))) return
    this.step(() => {
      for (const o of now) if (!people.some(p => p.id === o.id)) this.runtime.disconnect(o)
      for (const p of people) if (!now.some(o => o.id === p.id)) this.runtime.connect(p)
    })
  }

  get areas(): AreaHolders { return structuredClone(this.runtime.areaHolders()) }

  /** Hands the areas to these holders (null: free) through real take, release and force-release commands. */
  set areas(holders: AreaHolders) {
    const current = this.runtime.areaHolders()
    if (Object.entries(holders).every(([area, want]) => (current[area] ?? null)?.id === want?.id)) return
    this.step(() => {
      for (const [area, want] of Object.entries(holders)) {
        const now = this.runtime.areaHolders()[area] ?? null
        if (now?.id === want?.id) continue
        if (now) this.must(this.runtime.command(now, { action: 'release-area', area }))
        if (want) this.must(this.runtime.command(want, { action: 'take-area', area }))
      }
    })
  }

  /** `user` takes `area` through the real command. */
  take(user: LiveUser, area: string): DeltaMessage {
    return this.step(() => this.must(this.runtime.command(user, { action: 'take-area', area })))
  }

  /** The holder `from` offers `area` to `to` through the real hand-over command. */
  offer(from: LiveUser, area: string, to: LiveUser): DeltaMessage {
    return this.step(() => this.must(this.runtime.command(from, { action: 'hand-over', area, to: to.id })))
  }

  /** Reports these controllers online or offline, as their status topics would. */
  set devices(devices: Record<string, DeviceStatus>) {
    this.step(() => {
      for (const [device, status] of Object.entries(devices)) this.runtime.deviceStatus(device, status.online, status.at)
    })
  }

  snapshot(): SnapshotMessage {
    return structuredClone(this.runtime.snapshot()) as SnapshotMessage
  }

  liveState(): LiveState {
    return this.snapshot().state
  }

  /** One input from the hardware or one operator action, as the server would receive it. */
  event(e: EventInput): DeltaMessage {
    return this.step(() => {
      switch (e.type) {
        case 'detector': return this.runtime.detectorInput(e.detector, e.occupied, this.at)
        case 'turnout': return this.runtime.turnoutReport(e.turnout, e.position as 'normal' | 'reverse', this.at)
        case 'override': {
          const user = this.holderFor(areaOfSignal(this.layout, e.signal)?.id)
          return this.must(this.runtime.command(user, { action: 'set-override', signal: e.signal, mode: e.mode, revision: this.state.signalRevisions[e.signal]! }))
        }
        case 'interpose': {
          const user = this.holderFor(areaOfBlock(this.layout, e.block)?.id ?? this.layout.areas[0]!.id)
          return this.must(this.runtime.command(user, { action: 'interpose', block: e.block, description: e.description }))
        }
        case 'acknowledge': {
          const user = this.runtime.operators().find(o => String(o.id) === e.by) ?? TAM
          return this.must(this.runtime.command(user, { action: 'acknowledge', alarm: e.alarm }))
        }
      }
    })
  }

  /**
   * A delta of hand-made changes, numbered next; only for the kinds of change the runtime cannot yet be
   * asked for from outside. Do not send runtime steps to the same panel after it.
   */
  delta(changes: LiveChange[]): DeltaMessage {
    this.handMade++
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

  private step(act: () => void): DeltaMessage {
    this.at += 1000
    const before = this.deltas.length
    act()
    this.runtime.flushDelta()
    if (this.deltas.length === before) throw new Error('the runtime sent no delta for this step')
    return structuredClone(this.deltas.at(-1)!)
  }

  private holderFor(area: string | undefined): LiveUser {
    if (!area) return ADA
    const holder = this.runtime.areaHolders()[area]
    if (holder) return holder
    this.must(this.runtime.command(ADA, { action: 'take-area', area }))
    return ADA
  }

  private must(outcome: CommandOutcome): void {
    if (!outcome.ok) throw new Error(`the runtime refused a demo step: ${outcome.reason}`)
  }
}

/**
 * A train described 1F42 (a headcode of the usual form, docs/sources.md §5) enters the up approach from fiddle
 * road 1 and runs towards Quillbury while SU2 (Quillbury up starter) is held: it passes SU2 at danger.
 */
export function spadRun(run = new DemoRun()): { run: DemoRun, deltas: DeltaMessage[] } {
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
