import type { Layout, LayoutArea } from '#shared/schemas/layout'
import { createEngine, type Change, type Engine, type LayoutEvent, type LayoutState } from '#shared/signalling'
import type { AreaHolders, DeviceStatus, FeedEntry, LiveChange, LiveCommand, LiveSession, LiveUser, ServerMessage } from '#shared/live/protocol'
import { describeChange, namesOf, type LayoutNames } from '#shared/live/feed'
import { acknowledgeVerdict, areaVerdict, handOverTargetVerdict, interposeVerdict, signalVerdict, turnoutVerdict, type Verdict } from '#shared/live/rights'
import { DetectorDebounce } from './detector-debounce'
import { signalPayload, signalTopic, turnoutSetTopic } from '#shared/live/topics'

export interface JournalSink {
  append(entry: { layoutId: number, sessionId: number | null, at: number, type: string, subject: string | null, payload: Record<string, unknown>, userId: number | null }): void
}

export interface RuntimeDeps {
  layoutId: number
  slug: string
  layout: Layout
  publish: (topic: string, payload: string, retain: boolean) => void
  journal: JournalSink
  broadcast: (message: ServerMessage) => void
  now?: () => number
  debounceMs?: number
  state?: LayoutState
  areas?: AreaHolders
  session?: LiveSession | null
}

const FEED_LENGTH = 30

/** What became of an operator's command: carried out, or refused with a reason the operator reads. */
export type CommandOutcome = { ok: true } | { ok: false, reason: string }

/**
 * The single writer of one layout's live state. Every input — a detector, a turnout report, an operator's
 * command — goes through `engine.apply` in arrival order; the changes then go to MQTT (signal indications,
 * retained), to the layout's panels (a numbered delta) and to the journal.
 */
export class LayoutRuntime {
  readonly slug: string
  readonly layout: Layout
  private readonly engine: Engine
  private readonly debounce: DetectorDebounce
  private readonly names: LayoutNames
  private readonly detectorBlock: Map<string, string>
  private readonly now: () => number
  private seq = 0
  private pendingChanges: LiveChange[] = []
  private areas: AreaHolders
  private connections = new Map<number, { user: LiveUser, count: number }>()
  private devices: Record<string, DeviceStatus> = {}
  private dropouts: Record<string, number> = {}
  private feed: FeedEntry[] = []
  private session: LiveSession | null

  constructor(private readonly deps: RuntimeDeps) {
    this.slug = deps.slug
    this.layout = deps.layout
    this.now = deps.now ?? Date.now
    this.engine = createEngine(deps.layout, deps.state)
    this.names = namesOf(deps.layout)
    this.detectorBlock = new Map(deps.layout.blocks.flatMap(b => b.detectors.map(d => [d, b.id] as [string, string])))
    this.areas = Object.fromEntries(deps.layout.areas.map(a => [a.id, deps.areas?.[a.id] ?? null]))
    this.session = deps.session ?? null
    this.debounce = new DetectorDebounce(deps.debounceMs ?? 300, {
      change: (detector, occupied, at) => this.applyInput({ type: 'detector', detector, occupied, at }, null),
      dropout: (detector, at) => this.recordDropout(detector, at),
    })
  }

  /** Publishes every current indication (retained), so decoders that connect later get their aspect. */
  publishAllIndications(): void {
    const at = this.now()
    for (const [signal, indication] of Object.entries(this.engine.indications())) {
      this.deps.publish(signalTopic(this.slug, signal), signalPayload(indication, at), true)
    }
  }

  // ---- inputs from the hardware ----

  detectorInput(detector: string, occupied: boolean, at = this.now()): void {
    if (!this.detectorBlock.has(detector)) return this.rejectInput(`detector/${detector}`, `unknown detector "${detector}"`)
    this.debounce.input(detector, occupied, at)
  }

  turnoutReport(turnout: string, position: 'normal' | 'reverse', at = this.now()): void {
    if (this.engine.state().turnouts[turnout] === position) return
    this.applyInput({ type: 'turnout', turnout, position, at }, null)
  }

  deviceStatus(device: string, online: boolean, at = this.now()): void {
    const status = { online, at }
    this.devices[device] = status
    this.emit([{ type: 'device', device, status }], { type: 'device', subject: device, payload: { online }, userId: null, at })
  }

  rejectInput(where: string, reason: string): void {
    this.deps.journal.append({ layoutId: this.deps.layoutId, sessionId: this.session?.id ?? null, at: this.now(), type: 'input-rejected', subject: where.slice(0, 64), payload: { reason }, userId: null })
  }

  // ---- operators ----

  connect(user: LiveUser): void {
    const entry = this.connections.get(user.id)
    if (entry) entry.count++
    else this.connections.set(user.id, { user, count: 1 })
    if (!entry) this.emit([{ type: 'operators', operators: this.operators() }])
  }

  disconnect(user: LiveUser): void {
    const entry = this.connections.get(user.id)
    if (!entry) return
    if (--entry.count > 0) return
    this.connections.delete(user.id)
    this.emit([{ type: 'operators', operators: this.operators() }])
  }

  operators(): LiveUser[] {
    return [...this.connections.values()].map(c => c.user).sort((a, b) => a.name.localeCompare(b.name))
  }

  /** Checks and carries out one command; the reason is shown to the operator when refused. */
  command(user: LiveUser, command: LiveCommand): CommandOutcome {
    const reason = this.unknownItem(command) ?? this.notAllowed(user, command) ?? this.staleRevision(command)
    if (reason) return { ok: false, reason }
    const at = this.now()
    const journal = { type: 'command', subject: 'area' in command ? command.area : null, payload: { ...command }, userId: user.id, at }
    const by = String(user.id)
    switch (command.action) {
      case 'take-area': return this.setHolder(command.area, user, `${user.name} took ${this.names.area(command.area)}`, journal)
      case 'release-area': return this.setHolder(command.area, null, `${user.name} released ${this.names.area(command.area)}`, journal)
      case 'force-release': return this.setHolder(command.area, null, `${user.name} force-released ${this.names.area(command.area)}`, journal)
      case 'hand-over': {
        const to = this.connections.get(command.to)!.user
        return this.setHolder(command.area, to, `${user.name} handed ${this.names.area(command.area)} over to ${to.name}`, journal)
      }
      case 'set-override':
        return this.applyCommand({ type: 'override', signal: command.signal, mode: command.mode, at, by }, user, { ...journal, subject: command.signal })
      case 'set-turnout': {
        const outcome = this.applyCommand({ type: 'turnout', turnout: command.turnout, position: command.position, at, by }, user, { ...journal, subject: command.turnout })
        if (outcome.ok) this.deps.publish(turnoutSetTopic(this.slug, command.turnout), JSON.stringify({ position: command.position, by: user.name }), false)
        return outcome
      }
      case 'interpose':
        return this.applyCommand({ type: 'interpose', block: command.block, description: command.description, at, by }, user, { ...journal, subject: command.block })
      case 'acknowledge':
        return this.applyCommand({ type: 'acknowledge', alarm: command.alarm, at, by }, user, { ...journal, subject: command.alarm })
    }
  }

  /** The command names an area, signal, turnout, block or alarm this layout does not have. */
  private unknownItem(command: LiveCommand): string | null {
    const state = this.engine.state()
    const missing = (kind: string, id: string) => `There is no ${kind} "${id}" on this layout.`
    switch (command.action) {
      case 'take-area': case 'release-area': case 'hand-over': case 'force-release':
        return this.area(command.area) ? null : missing('area', command.area)
      case 'set-override': return command.signal in state.overrides ? null : missing('signal', command.signal)
      case 'set-turnout': return command.turnout in state.turnouts ? null : missing('turnout', command.turnout)
      case 'interpose': return command.block in state.occupied ? null : missing('block', command.block)
      case 'acknowledge': {
        const alarm = state.alarms.find(a => a.id === command.alarm)
        if (!alarm) return `There is no alarm "${command.alarm}".`
        return alarm.acknowledgedAt === null ? null : 'That alarm has already been acknowledged.'
      }
    }
  }

  /** The user's role or the holders of the areas do not allow it (the rules of shared/live/rights.ts). */
  private notAllowed(user: LiveUser, command: LiveCommand): string | null {
    const reasonOf = (verdict: Verdict) => verdict.allowed ? null : verdict.reason
    switch (command.action) {
      case 'take-area': return reasonOf(areaVerdict(user, this.areas, this.area(command.area)!, 'take'))
      case 'release-area': return reasonOf(areaVerdict(user, this.areas, this.area(command.area)!, 'release'))
      case 'force-release': return reasonOf(areaVerdict(user, this.areas, this.area(command.area)!, 'force-release'))
      case 'hand-over': {
        const area = this.area(command.area)!
        return reasonOf(areaVerdict(user, this.areas, area, 'hand-over'))
          ?? reasonOf(handOverTargetVerdict(user, area, this.connections.get(command.to)?.user ?? null))
      }
      case 'set-override': return reasonOf(signalVerdict(user, this.layout, this.areas, command.signal))
      case 'set-turnout': return reasonOf(turnoutVerdict(user, this.layout, this.areas, command.turnout))
      case 'interpose': return reasonOf(interposeVerdict(user, this.layout, this.areas, command.block))
      case 'acknowledge': return reasonOf(acknowledgeVerdict(user))
    }
  }

  /** The command was made against an older revision of the signal or turnout than the current one. */
  private staleRevision(command: LiveCommand): string | null {
    const state = this.engine.state()
    const changed = (what: string, current: number, seen: number) =>
      `${what} was changed meanwhile (revision ${current}, your view had ${seen}); look again and retry.`
    if (command.action === 'set-override') {
      const current = state.signalRevisions[command.signal]!
      return command.revision === current ? null : changed(`Signal ${this.names.signal(command.signal)}`, current, command.revision)
    }
    if (command.action === 'set-turnout') {
      const current = state.turnoutRevisions[command.turnout]!
      return command.revision === current ? null : changed(`Turnout ${command.turnout}`, current, command.revision)
    }
    return null
  }

  private area(id: string): LayoutArea | undefined {
    return this.layout.areas.find(a => a.id === id)
  }

  private setHolder(area: string, holder: LiveUser | null, text: string, journal: JournalFields): CommandOutcome {
    this.areas = { ...this.areas, [area]: holder }
    this.emit([{ type: 'areas', areas: this.areas }, { type: 'feed', entry: this.pushFeed({ at: journal.at, tone: 'info', text }) }], journal)
    return { ok: true }
  }

  private applyCommand(event: LayoutEvent, user: LiveUser, journal: JournalFields): CommandOutcome {
    const changes = this.engine.apply(event)
    const error = changes.find(c => c.type === 'error')
    if (error && error.type === 'error') return { ok: false, reason: error.message }
    this.publishAndEmit(changes, journal, user)
    return { ok: true }
  }

  private applyInput(event: LayoutEvent, user: LiveUser | null): void {
    const changes = this.engine.apply(event)
    const error = changes.find(c => c.type === 'error')
    if (error && error.type === 'error') return this.rejectInput(error.path, error.message)
    const subject = event.type === 'detector' ? event.detector : event.type === 'turnout' ? event.turnout : null
    this.publishAndEmit(changes, { type: `${event.type}-input`, subject, payload: { ...event }, userId: user?.id ?? null, at: event.at }, user)
  }

  private recordDropout(detector: string, at: number): void {
    const block = this.detectorBlock.get(detector)!
    this.dropouts = { ...this.dropouts, [block]: at }
    const change: LiveChange = { type: 'dropout', block, detector, at }
    const entry = describeChange(this.names, change, () => null, at)
    this.emit([change, ...(entry ? [{ type: 'feed', entry: this.pushFeed(entry) } as LiveChange] : [])], { type: 'dropout', subject: block, payload: { detector }, userId: null, at })
  }

  private publishAndEmit(changes: Change[], journal: JournalFields, user: LiveUser | null): void {
    if (!changes.length) return
    const at = journal.at
    const live: LiveChange[] = [...changes]
    for (const change of changes) {
      if (change.type === 'indication') this.deps.publish(signalTopic(this.slug, change.signal), signalPayload(change.indication, at), true)
      const entry = describeChange(this.names, change, id => this.userName(id, user), at)
      if (entry) live.push({ type: 'feed', entry: this.pushFeed(entry) })
    }
    this.emit(live, journal, changes)
  }

  private userName(id: string | undefined, user: LiveUser | null): string | null {
    if (!id) return null
    if (user && String(user.id) === id) return user.name
    return this.connections.get(Number(id))?.user.name ?? null
  }

  private pushFeed(entry: FeedEntry): FeedEntry {
    this.feed = [...this.feed, entry].slice(-FEED_LENGTH)
    return entry
  }

  /** Sends one numbered delta to the layout's panels and journals the input and each engine change. */
  private emit(changes: LiveChange[], journal?: JournalFields, engineChanges: Change[] = []): void {
    this.queueDelta(changes)
    if (!journal) return
    const base = { layoutId: this.deps.layoutId, sessionId: this.session?.id ?? null }
    this.deps.journal.append({ ...base, ...journal })
    for (const change of engineChanges) {
      this.deps.journal.append({ ...base, at: journal.at, type: change.type, subject: subjectOf(change), payload: change as unknown as Record<string, unknown>, userId: journal.userId })
    }
  }

  /**
   * Changes made in one turn of the event loop (a burst of MQTT messages read at once) go out as one
   * numbered delta: far fewer WebSocket frames under load, no added wait when the line is quiet.
   */
  private queueDelta(changes: LiveChange[]): void {
    this.pendingChanges.push(...changes)
    if (this.pendingChanges.length === changes.length) setImmediate(() => this.flushDelta())
  }

  /** Sends the queued changes now (also before a snapshot, so a snapshot never runs ahead of a delta). */
  flushDelta(): void {
    if (!this.pendingChanges.length) return
    const changes = this.pendingChanges
    this.pendingChanges = []
    this.seq++
    this.deps.broadcast({ type: 'delta', layout: this.slug, seq: this.seq, changes })
  }

  snapshot(): ServerMessage {
    this.flushDelta()
    const s = this.engine.state()
    return {
      type: 'snapshot', layout: this.slug, seq: this.seq, definition: this.layout,
      state: {
        occupied: s.occupied, turnouts: s.turnouts, overrides: s.overrides, descriptions: s.descriptions, alarms: s.alarms,
        indications: this.engine.indications(), signalRevisions: s.signalRevisions, turnoutRevisions: s.turnoutRevisions, dropouts: this.dropouts,
      },
      areas: this.areas, operators: this.operators(), devices: this.devices, session: this.session, feed: this.feed,
    }
  }

  state(): LayoutState { return this.engine.state() }
  areaHolders(): AreaHolders { return this.areas }

  stop(): void {
    this.debounce.flush()
    this.flushDelta()
  }
}

interface JournalFields { type: string, subject: string | null, payload: Record<string, unknown>, userId: number | null, at: number }

function subjectOf(change: Change): string | null {
  switch (change.type) {
    case 'detector': return change.detector
    case 'block': case 'description': case 'speed': return change.block
    case 'indication': case 'override': return change.signal
    case 'turnout': return change.turnout
    case 'alarm': case 'alarm-acknowledged': return change.alarm.signal
    default: return null
  }
}
