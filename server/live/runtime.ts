import type { Layout, LayoutArea } from '#shared/schemas/layout'
import { createEngine, lockOf, turnoutLocks, turnoutsTouchedBy, type Change, type Engine, type LayoutEvent, type LayoutState, type LockInputs, type TurnoutLock } from '#shared/signalling'
import { topologyOf } from '#shared/signalling/topology'
import { lockReason, type TurnoutLockInfo } from '#shared/live/locking'
import { COMMAND_MAX_AGE_MS, type AreaHolders, type DeviceStatus, type FeedEntry, type HandOverOffers, type LiveChange, type LiveCommand, type LiveSession, type LiveUser, type ServerMessage, type UnattendedAreas } from '#shared/live/protocol'
import { describeChange, namesOf, type LayoutNames } from '#shared/live/feed'
import { acknowledgeVerdict, areaVerdict, forceTurnoutVerdict, handOverTargetVerdict, interposeVerdict, signalVerdict, turnoutVerdict, type Verdict } from '#shared/live/rights'
import { roleAtLeast } from '#shared/utils/roles'
import { DetectorDebounce } from './detector-debounce'
import { areaPayload, areaTopic, signalPayload, signalTopic, turnoutSetTopic } from '#shared/live/topics'

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
  /** A holder with no panel connected this long leaves the area unattended (any signaller may take it). */
  areaGraceMs?: number
  /** A hand-over not accepted within this time falls back to the giver. */
  handOverTimeoutMs?: number
  /** First delta number less one: a new owner (several processes) numbers past every former owner's. */
  seqStart?: number
}

export const AREA_GRACE_MS = 60_000
export const HAND_OVER_TIMEOUT_MS = 30_000

const FEED_LENGTH = 30
/** A report of the requested position within this time is credited to the person who asked for it. */
const REQUEST_CREDIT_MS = 60_000

/** What became of an operator's command: carried out, or refused with a reason the operator reads. */
export type CommandOutcome = { ok: true, note?: string } | { ok: false, reason: string }

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
  private readonly decoders: Map<number, string>
  private readonly now: () => number
  private seq = 0
  private pendingChanges: LiveChange[] = []
  private areas: AreaHolders
  /** Holders with no panel connected: user id -> when their last panel closed. */
  private awaySince = new Map<number, number>()
  private unattended: UnattendedAreas = {}
  private offers: HandOverOffers = {}
  private timers = new Set<ReturnType<typeof setTimeout>>()
  private readonly graceMs: number
  private readonly handOverMs: number
  private connections = new Map<number, { user: LiveUser, count: number }>()
  private devices: Record<string, DeviceStatus> = {}
  private dropouts: Record<string, number> = {}
  private feed: FeedEntry[] = []
  private session: LiveSession | null
  /** Locked turnouts only, kept up to date after every change (copied on write: a snapshot may hold it). */
  private locks: Record<string, TurnoutLockInfo>
  /** The last throw asked for per turnout, until the turnout reports a position. */
  private requests = new Map<string, { position: 'normal' | 'reverse', userId: number, at: number }>()

  constructor(private readonly deps: RuntimeDeps) {
    this.slug = deps.slug
    this.layout = deps.layout
    this.now = deps.now ?? Date.now
    this.seq = deps.seqStart ?? 0
    this.engine = createEngine(deps.layout, deps.state)
    this.names = namesOf(deps.layout)
    this.decoders = new Map(deps.layout.decoders.map(d => [d.address, d.description]))
    this.detectorBlock = new Map(deps.layout.blocks.flatMap(b => b.detectors.map(d => [d, b.id] as [string, string])))
    this.areas = Object.fromEntries(deps.layout.areas.map(a => [a.id, deps.areas?.[a.id] ?? null]))
    this.session = deps.session ?? null
    this.graceMs = deps.areaGraceMs ?? AREA_GRACE_MS
    this.handOverMs = deps.handOverTimeoutMs ?? HAND_OVER_TIMEOUT_MS
    // holders restored from the journal have no panel open yet: their grace period starts now
    const start = this.now()
    for (const holder of Object.values(this.areas)) if (holder && !this.awaySince.has(holder.id)) this.awaySince.set(holder.id, start)
    if (this.awaySince.size) this.later(this.graceMs, () => this.checkAttendance())
    this.locks = turnoutLocks(deps.layout, this.engine.state(), this.engine.indications())
    this.debounce = new DetectorDebounce(deps.debounceMs ?? 300, {
      change: (detector, occupied, at) => this.applyInput({ type: 'detector', detector, occupied, at }, null),
      dropout: (detector, at) => this.recordDropout(detector, at),
    })
  }

  /**
   * Publishes every current indication and whether each area is held (retained), so decoders and the fake
   * layout that connect later get them.
   */
  publishAllRetained(): void {
    const at = this.now()
    for (const [signal, indication] of Object.entries(this.engine.indications())) {
      this.deps.publish(signalTopic(this.slug, signal), signalPayload(indication, at), true)
    }
    for (const [area, holder] of Object.entries(this.areas)) this.deps.publish(areaTopic(this.slug, area), areaPayload(holder !== null), true)
  }

  // ---- inputs from the hardware ----

  /** `address`: the decoder address the detector read in its block (RailCom), if it reports one. */
  detectorInput(detector: string, occupied: boolean, at = this.now(), address?: number): void {
    if (!this.detectorBlock.has(detector)) return this.rejectInput(`detector/${detector}`, `unknown detector "${detector}"`)
    this.debounce.input(detector, occupied, at)
    if (occupied && address !== undefined) this.describeFromAddress(detector, address, at)
  }

  /** The layout's decoder table names the train in the block: its description goes into the berth. */
  private describeFromAddress(detector: string, address: number, at: number): void {
    const block = this.detectorBlock.get(detector)!
    const description = this.decoders.get(address)
    if (description === undefined) return this.rejectInput(`detector/${detector}`, `decoder address ${address} is not in the layout's decoder table`)
    const state = this.engine.state()
    if (state.occupied[block] !== true || state.descriptions[block] === description) return
    this.applyInput({ type: 'interpose', block, description, at, by: `decoder:${address}` }, null)
  }

  /** The position a turnout reports: the only thing that moves it in the state (a throw request does not). */
  turnoutReport(turnout: string, position: 'normal' | 'reverse', at = this.now()): void {
    const request = this.requests.get(turnout)
    if (this.engine.state().turnouts[turnout] === position) {
      if (request?.position === position) this.requests.delete(turnout)
      return
    }
    const credited = request && request.position === position && at - request.at <= REQUEST_CREDIT_MS
    this.requests.delete(turnout)
    this.applyInput({ type: 'turnout', turnout, position, at, ...(credited ? { by: String(request.userId) } : {}) }, null)
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
    if (entry) return
    this.awaySince.delete(user.id)
    this.emit([{ type: 'operators', operators: this.operators() }, ...this.attendanceChanges()])
  }

  disconnect(user: LiveUser): void {
    const entry = this.connections.get(user.id)
    if (!entry) return
    if (--entry.count > 0) return
    this.connections.delete(user.id)
    this.awaySince.set(user.id, this.now())
    this.emit([{ type: 'operators', operators: this.operators() }, ...this.offersWithout(o => o.to.id === user.id)])
    this.later(this.graceMs, () => this.checkAttendance())
  }

  // ---- areas nobody attends, and hand-overs waiting for the receiver ----

  private later(ms: number, run: () => void): void {
    const timer = setTimeout(() => { this.timers.delete(timer); run() }, ms)
    timer.unref?.()
    this.timers.add(timer)
  }

  /** Areas whose holder has been away for the grace period (area id -> since when). */
  private computeUnattended(): UnattendedAreas {
    const now = this.now()
    const out: UnattendedAreas = {}
    for (const [area, holder] of Object.entries(this.areas)) {
      const since = holder ? this.awaySince.get(holder.id) : undefined
      if (since !== undefined && now - since >= this.graceMs) out[area] = since
    }
    return out
  }

  private attendanceChanges(): LiveChange[] {
    const next = this.computeUnattended()
    if (JSON.stringify(next) === JSON.stringify(this.unattended)) return []
    this.unattended = next
    return [{ type: 'unattended', areas: next }]
  }

  private checkAttendance(): void {
    const before = this.unattended
    const changes = this.attendanceChanges()
    if (!changes.length) return
    const feed = Object.keys(this.unattended).filter(a => !(a in before)).map(a => ({
      type: 'feed' as const,
      entry: this.pushFeed({ at: this.now(), tone: 'warn', text: `${this.names.area(a)} is unattended: ${this.areas[a]?.name ?? 'its holder'} has had no panel open for ${Math.round(this.graceMs / 1000)} s. Any signaller may take it.` }),
    }))
    this.emit([...changes, ...feed])
  }

  /** Drops the offers `drop` picks (their giver keeps the area); the change to send, if any. */
  private offersWithout(drop: (offer: HandOverOffers[string], area: string) => boolean): LiveChange[] {
    const kept = Object.fromEntries(Object.entries(this.offers).filter(([area, o]) => !drop(o, area)))
    if (Object.keys(kept).length === Object.keys(this.offers).length) return []
    this.offers = kept
    return [{ type: 'offers', offers: kept }]
  }

  private expireOffer(area: string, offer: HandOverOffers[string]): void {
    if (this.offers[area] !== offer) return
    const changes = this.offersWithout((_, a) => a === area)
    const text = `${offer.to.name} did not accept ${this.names.area(area)} within ${Math.round(this.handOverMs / 1000)} s: it stays with ${offer.from.name}.`
    this.emit([...changes, { type: 'feed', entry: this.pushFeed({ at: this.now(), tone: 'warn', text }) }], { type: 'hand-over-lapsed', subject: area, payload: { from: offer.from.id, to: offer.to.id }, userId: null, at: this.now() })
  }

  /** Releases every area an account holds (its access was withdrawn); journaled without a user. */
  releaseAreasOf(userId: number): void {
    for (const [area, holder] of Object.entries(this.areas)) {
      if (holder?.id !== userId) continue
      const journal = { type: 'command', subject: area, payload: { action: 'release-area', area, reason: 'access withdrawn' }, userId: null, at: this.now() }
      this.setHolder(area, null, `${this.names.area(area)} released: ${holder.name} no longer has access`, journal)
    }
  }

  /** Who is connected and how many times, for the runtime that replaces this one on a reload. */
  connectedOperators(): { user: LiveUser, count: number }[] {
    return [...this.connections.values()].map(c => ({ ...c }))
  }

  operators(): LiveUser[] {
    return [...this.connections.values()].map(c => c.user).sort((a, b) => a.name.localeCompare(b.name))
  }

  /**
   * Checks and carries out one command; the reason is shown to the operator when refused. `madeAt` is when the
   * person made it (server clock, as the panel estimates it): one that arrives too late is refused.
   */
  command(user: LiveUser, command: LiveCommand, madeAt?: number): CommandOutcome {
    const late = this.late(madeAt)
    const unknown = late ?? this.unknownItem(command)
    const already = unknown ? null : this.alreadyDone(user, command)
    if (already) return { ok: true, note: already }
    const reason = unknown ?? this.notAllowed(user, command) ?? this.staleRevision(command) ?? this.nothingToDo(command)
    if (reason) return { ok: false, reason }
    const lockRefusal = this.locked(command)
    if (lockRefusal) {
      this.recordRefusal(user, command, lockRefusal)
      return { ok: false, reason: lockRefusal }
    }
    const at = this.now()
    const journal = { type: 'command', subject: 'area' in command ? command.area : null, payload: { ...command }, userId: user.id, at }
    const by = String(user.id)
    switch (command.action) {
      case 'take-area': {
        const from = this.areas[command.area]
        const text = from ? `${user.name} took ${this.names.area(command.area)}, unattended since ${from.name} left` : `${user.name} took ${this.names.area(command.area)}`
        return this.setHolder(command.area, user, text, journal)
      }
      case 'release-area': return this.setHolder(command.area, null, `${user.name} released ${this.names.area(command.area)}`, journal)
      case 'force-release': return this.setHolder(command.area, null, `${user.name} force-released ${this.names.area(command.area)}`, journal)
      case 'hand-over': return this.offerArea(command.area, user, this.connections.get(command.to)!.user, journal)
      case 'accept-hand-over': {
        const offer = this.offers[command.area]!
        return this.setHolder(command.area, user, `${user.name} accepted ${this.names.area(command.area)} from ${offer.from.name}`, journal)
      }
      case 'decline-hand-over': {
        const offer = this.offers[command.area]!
        const changes = this.offersWithout((_, a) => a === command.area)
        const text = `${user.name} declined ${this.names.area(command.area)}: it stays with ${offer.from.name}.`
        this.emit([...changes, { type: 'feed', entry: this.pushFeed({ at, tone: 'info', text }) }], { ...journal, type: 'hand-over-declined' })
        return { ok: true }
      }
      case 'set-override':
        return this.applyCommand({ type: 'override', signal: command.signal, mode: command.mode, at, by }, user, { ...journal, subject: command.signal })
      case 'set-turnout':
        return this.requestThrow(user, command.turnout, command.position, null, { ...journal, subject: command.turnout })
      case 'force-turnout':
        return this.requestThrow(user, command.turnout, command.position, this.locks[command.turnout]!, { ...journal, subject: command.turnout })
      case 'interpose':
        return this.applyCommand({ type: 'interpose', block: command.block, description: command.description, at, by }, user, { ...journal, subject: command.block })
      case 'acknowledge':
        return this.applyCommand({ type: 'acknowledge', alarm: command.alarm, at, by }, user, { ...journal, subject: command.alarm })
    }
  }

  /**
   * Area commands asked for what is already so: nothing to do, and the panel says so quietly (a second
   * Take from a double tap, a Release of a free area, the same hand-over offered twice).
   */
  private alreadyDone(user: LiveUser, command: LiveCommand): string | null {
    if (!('area' in command) || !this.area(command.area)) return null
    const name = this.names.area(command.area)
    const holder = this.areas[command.area]
    switch (command.action) {
      case 'take-area': return holder?.id === user.id ? `you already hold ${name}.` : null
      case 'accept-hand-over': return holder?.id === user.id && !this.offers[command.area] ? `you already hold ${name}.` : null
      case 'release-area': return holder === null && roleAtLeast(user.role, 'signaller') ? `${name} is not held: nothing to release.` : null
      case 'hand-over': {
        const offer = this.offers[command.area]
        return offer && offer.from.id === user.id && offer.to.id === command.to ? `already offered to ${offer.to.name}; waiting for them to accept.` : null
      }
      default: return null
    }
  }

  /** A command that waited too long on the way (a frozen server, a stalled link) no longer says what its maker sees. */
  private late(madeAt: number | undefined): string | null {
    if (madeAt === undefined) return null
    const age = this.now() - madeAt
    if (age <= COMMAND_MAX_AGE_MS) return null
    return `Not done: this command reached the server ${Math.round(age / 1000)} s after you made it (the limit is ${COMMAND_MAX_AGE_MS / 1000} s), so it may no longer fit what is on the layout. Look again and retry.`
  }

  /** The command names an area, signal, turnout, block or alarm this layout does not have. */
  private unknownItem(command: LiveCommand): string | null {
    const state = this.engine.state()
    const missing = (kind: string, id: string) => `There is no ${kind} "${id}" on this layout.`
    switch (command.action) {
      case 'take-area': case 'release-area': case 'hand-over': case 'force-release':
        return this.area(command.area) ? null : missing('area', command.area)
      case 'accept-hand-over': case 'decline-hand-over':
        if (!this.area(command.area)) return missing('area', command.area)
        return this.offers[command.area] ? null : `Nobody is offering you ${this.names.area(command.area)} now (the offer may have lapsed).`
      case 'set-override': return command.signal in state.overrides ? null : missing('signal', command.signal)
      case 'set-turnout': case 'force-turnout': return command.turnout in state.turnouts ? null : missing('turnout', command.turnout)
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
      case 'take-area': return reasonOf(areaVerdict(user, this.areas, this.area(command.area)!, 'take', this.unattended))
      case 'accept-hand-over': case 'decline-hand-over':
        return this.offers[command.area]!.to.id === user.id ? null : `${this.names.area(command.area)} is offered to ${this.offers[command.area]!.to.name}, not to you.`
      case 'release-area': return reasonOf(areaVerdict(user, this.areas, this.area(command.area)!, 'release'))
      case 'force-release': return reasonOf(areaVerdict(user, this.areas, this.area(command.area)!, 'force-release'))
      case 'hand-over': {
        const area = this.area(command.area)!
        return reasonOf(areaVerdict(user, this.areas, area, 'hand-over'))
          ?? reasonOf(handOverTargetVerdict(user, area, this.connections.get(command.to)?.user ?? null))
      }
      case 'set-override': return reasonOf(signalVerdict(user, this.layout, this.areas, command.signal))
      case 'set-turnout': return reasonOf(turnoutVerdict(user, this.layout, this.areas, command.turnout))
      case 'force-turnout': return reasonOf(forceTurnoutVerdict(user, this.layout, command.turnout))
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
    if (command.action === 'set-turnout' || command.action === 'force-turnout') {
      const current = state.turnoutRevisions[command.turnout]!
      return command.revision === current ? null : changed(`Turnout ${command.turnout}`, current, command.revision)
    }
    return null
  }

  /** Asking for the position a turnout already reports would do nothing. */
  private nothingToDo(command: LiveCommand): string | null {
    if (command.action !== 'set-turnout' && command.action !== 'force-turnout') return null
    return this.engine.state().turnouts[command.turnout] === command.position ? `${command.turnout} already lies ${command.position}.` : null
  }

  /**
   * Interlocking: a throw of a locked turnout is refused with the lock's reason; a forced throw is refused
   * when there is no lock to force.
   */
  private locked(command: LiveCommand): string | null {
    if (command.action !== 'set-turnout' && command.action !== 'force-turnout') return null
    const lock = this.locks[command.turnout]
    if (command.action === 'force-turnout' && !lock) return `${command.turnout} is not locked: throw it the usual way.`
    if (command.action === 'set-turnout' && lock) return lockReason(command.turnout, lock, this.engine.indications())
    return null
  }

  /** A refused throw goes to the journal and the feed: everyone sees that a throw was asked for and why not. */
  private recordRefusal(user: LiveUser, command: LiveCommand, reason: string): void {
    const at = this.now()
    const subject = 'turnout' in command ? command.turnout : null
    const entry = this.pushFeed({ at, tone: 'warn', text: `${user.name}: ${commandWords(command)} refused. ${reason}` })
    this.emit([{ type: 'feed', entry }], { type: 'command-refused', subject, payload: { ...command, reason }, userId: user.id, at })
  }

  /**
   * Sends a throw request to the layout. The state does not change here: only the position the turnout then
   * reports counts (docs/mqtt-topics.md). `forced` is the lock an admin chose to override.
   */
  private requestThrow(user: LiveUser, turnout: string, position: 'normal' | 'reverse', forced: TurnoutLockInfo | null, journal: JournalFields): CommandOutcome {
    this.requests.set(turnout, { position, userId: user.id, at: journal.at })
    this.deps.publish(turnoutSetTopic(this.slug, turnout), JSON.stringify({ position, by: user.name }), false)
    const text = forced
      ? `${user.name} forced ${turnout} to ${position} although ${lockReason(turnout, forced, this.engine.indications()).replace(`${turnout} is locked: `, '')}`
      : `${user.name} asked for ${turnout} to be thrown ${position}`
    const entry = this.pushFeed({ at: journal.at, tone: forced ? 'warn' : 'info', text })
    this.emit([{ type: 'feed', entry }], forced ? { ...journal, payload: { ...journal.payload, forced: true, lock: forced } } : journal)
    return { ok: true }
  }

  private lockInputs(): LockInputs {
    const state = this.engine.state()
    const indications = this.engine.indications()
    return {
      occupied: b => state.occupied[b] === true,
      position: id => state.turnouts[id] ?? 'unknown',
      aspect: id => indications[id]?.aspect ?? 'danger',
    }
  }

  /** Lock changes the engine changes caused, applied to `locks`, as changes for the panels. */
  private lockChanges(changes: Change[]): LiveChange[] {
    const touched = turnoutsTouchedBy(this.layout, changes)
    if (!touched.size) return []
    const topo = topologyOf(this.layout)
    const inputs = this.lockInputs()
    const out: LiveChange[] = []
    for (const turnout of touched) {
      const now = lockOf(topo, turnout, inputs)
      if (sameLock(now, this.locks[turnout] ?? null)) continue
      const next = { ...this.locks }
      if (now) next[turnout] = now
      else delete next[turnout]
      this.locks = next
      out.push({ type: 'lock', turnout, lock: now })
    }
    return out
  }

  /** Locked turnouts and why, as the panels see them. */
  turnoutLocks(): Record<string, TurnoutLockInfo> { return this.locks }

  private area(id: string): LayoutArea | undefined {
    return this.layout.areas.find(a => a.id === id)
  }

  private setHolder(area: string, holder: LiveUser | null, text: string, journal: JournalFields): CommandOutcome {
    const wasHeld = this.areas[area] !== null
    this.areas = { ...this.areas, [area]: holder }
    if (wasHeld !== (holder !== null)) this.deps.publish(areaTopic(this.slug, area), areaPayload(holder !== null), true)
    const offers = this.offersWithout((_, a) => a === area)
    this.emit([{ type: 'areas', areas: this.areas }, ...offers, ...this.attendanceChanges(), { type: 'feed', entry: this.pushFeed({ at: journal.at, tone: 'info', text }) }], journal)
    return { ok: true }
  }

  /** The holder offers an area to another signaller, who has HAND_OVER_TIMEOUT_MS to accept it. */
  private offerArea(area: string, from: LiveUser, to: LiveUser, journal: JournalFields): CommandOutcome {
    const offer = { from, to, at: journal.at, until: journal.at + this.handOverMs }
    this.offers = { ...this.offers, [area]: offer }
    const text = `${from.name} offers ${this.names.area(area)} to ${to.name}, who has ${Math.round(this.handOverMs / 1000)} s to accept`
    this.emit([{ type: 'offers', offers: this.offers }, { type: 'feed', entry: this.pushFeed({ at: journal.at, tone: 'info', text }) }], { ...journal, payload: { ...journal.payload, offer: true } })
    this.later(this.handOverMs, () => this.expireOffer(area, offer))
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
    const subject = event.type === 'detector' ? event.detector : event.type === 'turnout' ? event.turnout : event.type === 'interpose' ? event.block : null
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
    const live: LiveChange[] = [...changes, ...this.lockChanges(changes)]
    for (const change of changes) {
      if (change.type === 'indication') this.deps.publish(signalTopic(this.slug, change.signal), signalPayload(change.indication, at), true)
      const entry = describeChange(this.names, change, id => this.userName(id, user), at)
      if (entry) live.push({ type: 'feed', entry: this.pushFeed(entry) })
    }
    this.emit(live, journal, changes)
  }

  private userName(id: string | undefined, user: LiveUser | null): string | null {
    if (!id) return null
    if (id.startsWith('decoder:')) return `decoder address ${id.slice('decoder:'.length)}`
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

  /**
   * Starts (a session) or ends (null) the operating session. Entries from the start entry on carry the new
   * session; the end entry is still the ended session's last. Every panel is told.
   */
  setSession(session: LiveSession | null, userId: number | null): void {
    const at = this.now()
    const changed = session ?? this.session
    if (!changed) return
    if (session) this.session = session
    const text = session ? `Session ${session.name} started` : `Session ${changed.name} ended`
    this.emit([{ type: 'session', session }, { type: 'feed', entry: this.pushFeed({ at, tone: 'info', text }) }],
      { type: session ? 'session-started' : 'session-ended', subject: String(changed.id), payload: { name: changed.name }, userId, at })
    if (!session) this.session = null
  }

  currentSession(): LiveSession | null { return this.session }

  snapshot(): ServerMessage {
    this.flushDelta()
    const s = this.engine.state()
    return {
      type: 'snapshot', layout: this.slug, seq: this.seq, definition: this.layout,
      state: {
        occupied: s.occupied, turnouts: s.turnouts, overrides: s.overrides, descriptions: s.descriptions, alarms: s.alarms,
        indications: this.engine.indications(), signalRevisions: s.signalRevisions, turnoutRevisions: s.turnoutRevisions, dropouts: this.dropouts,
        locks: this.locks,
      },
      areas: this.areas, unattended: this.unattended, offers: this.offers,
      operators: this.operators(), devices: this.devices, session: this.session, feed: this.feed,
      serverTime: this.now(),
    }
  }

  state(): LayoutState { return this.engine.state() }
  areaHolders(): AreaHolders { return this.areas }

  stop(): void {
    for (const timer of this.timers) clearTimeout(timer)
    this.timers.clear()
    this.debounce.flush()
    this.flushDelta()
  }
}

const sameLock = (a: TurnoutLock, b: TurnoutLock) => JSON.stringify(a) === JSON.stringify(b)

function commandWords(command: LiveCommand): string {
  if (command.action === 'set-turnout') return `throw of ${command.turnout} to ${command.position}`
  if (command.action === 'force-turnout') return `forced throw of ${command.turnout} to ${command.position}`
  return command.action
}

interface JournalFields { type: string, subject: string | null, payload: Record<string, unknown>, userId: number | null, at: number }

function subjectOf(change: Change): string | null {
  switch (change.type) {
    case 'detector': return change.detector
    case 'block': case 'description': case 'speed': return change.block
    case 'indication': case 'override': return change.signal
    case 'turnout': return change.turnout
    case 'alarm': case 'alarm-acknowledged': return change.alarm.kind === 'spad' ? change.alarm.signal : change.alarm.turnout
    default: return null
  }
}
