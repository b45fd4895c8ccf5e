import type { Layout } from '#shared/schemas/layout'
import { lockOf, scaleSpeed, type Aspect, type TurnoutLock } from '#shared/signalling'
import { needsThrough, placeKey, topologyOf, traceSection, type Topology, type TurnoutNeed } from '#shared/signalling/topology'
import { Output, type StepResult } from './output'
import type { RouteStep, TrainPlan } from './plan'
import { createRandom, type Random } from './random'
import { relative } from '#shared/live/topics'

/**
 * The fake layout's trains: a pure simulation. No clock, no timers, no MQTT: `step(dtMs, aspects)` moves
 * every train on by `dtMs` and returns what real hardware would publish (detectors, turnouts) and a log.
 * Random choices (dirty-track dropouts, signals passed at danger, small variations in speed and waiting
 * times) come from a generator seeded with `seed`, so the same seed and the same inputs give the same
 * publishes.
 *
 * Rules the trains keep:
 * - A train never enters a block another train occupies, whatever the signals show; it waits.
 * - It stops at the end of its block when the stop signal there shows danger (or nothing yet), and with
 *   `spadChance` per such stop runs past it instead, if the block ahead is free.
 * - It sets the turnouts of its route up to the block of the next signal ahead as soon as it can, and never
 *   enters a block whose turnouts are not set for it. Like a layout with an interlocking, it leaves alone a
 *   turnout that is locked (shared/signalling/locking.ts: its block occupied or cleared only just now, or a
 *   stop signal that is or may be off reading over it), one claimed by another train, and every turnout of
 *   an area a signaller holds: there the train waits at its signal until the signaller sets the route. A
 *   turnout thrown on request is left as it is by the trains for `OPERATOR_HOLD_MS`.
 */

export interface SimulationOptions {
  seed: number
  /** Chance that a train at a signal showing danger runs past it (0..1). Default 0.02. */
  spadChance?: number
  /** Chance per block a train enters that its detector drops out briefly (dirty track). Default 0.05. */
  dropoutChance?: number
  /** Train speeds are multiplied and waits divided by this. Default 1. */
  speedFactor?: number
  /** Run on block occupancy alone (no Blockbell server publishing indications). */
  ignoreSignals?: boolean
  /** Each block a train enters, its speed varies by up to this fraction either way. Default 0.1. */
  speedVariation?: number
  /** Simulation tick in ms; `step` cuts longer steps into ticks. Default 10. */
  tickMs?: number
  /**
   * Where the turnouts lie at the start (the rest lie normal). Given, the first routes are set only as the
   * locks allow, as at any other time: Blockbell already knows these positions, and moving a locked turnout
   * at start-up would be a move under a lock. Without it (a layout seen for the first time), the first routes
   * are set before anything is reported.
   */
  turnouts?: Record<string, 'normal' | 'reverse'>
}

export type TrainMode = 'running' | 'waiting' | 'dwelling' | 'lifting'

/** What a train is doing, for the log, tests and a status line. */
export interface TrainView {
  headcode: string
  /** Position of the front block in the train's route (index into its plan's route). */
  step: number
  /** Blocks the train occupies, rear first. */
  blocks: string[]
  mode: TrainMode
  waitingFor: string | null
  /** Times the train has started its route again. */
  laps: number
  /** Signals it ran past at danger. */
  spads: number
}

export const OPERATOR_HOLD_MS = 30_000
/**
 * A block the trains have just left still counts as occupied for locking this long: Blockbell holds a
 * detector's clear for a moment (300 ms by default) and the message takes its time.
 */
export const CLEAR_MARGIN_MS = 1500
const LIFT_MS = 4000

type Decision = { kind: 'go', spad: string | null } | { kind: 'wait', reason: string } | { kind: 'reverse' } | { kind: 'lift' }

interface Train {
  plan: TrainPlan
  steps: RouteStep[]
  /** Model speed at speed factor, mm per second. */
  baseSpeed: number
  speed: number
  /** Route position of the front as a running count: the step is `steps[index % steps.length]`. */
  index: number
  /** Distance of the front into its block, in the direction of travel, mm. */
  frontMm: number
  mode: 'running' | 'dwelling' | 'lifting'
  until: number
  dwellDone: boolean
  reversedAt: number
  spadRolled: boolean
  waitingFor: string | null
  blocks: string[]
  /** Running count of the step the rear is in (index + 1 while lifted off). */
  rearIndex: number
  /** Turnouts this train has claimed, with the running count of the step where it passes them. */
  claims: Map<string, number>
  laps: number
  spads: number
}

interface Dropout {
  block: string
  detector: string
  train: Train
  at: number
  restoreAt: number | null
}

/** Model speed in mm/s for a scale speed in km/h (scaleSpeed gives the km/h of 1 mm/s on the model). */
export function modelMmPerSecond(kmh: number, ratio: number): number {
  return kmh / scaleSpeed({ lengthMm: 1, seconds: 1, ratio }).kmh
}

export class Simulation {
  private readonly topo: Topology
  private readonly rng: Random
  private readonly spadChance: number
  private readonly dropoutChance: number
  private readonly speedFactor: number
  private readonly ignoreSignals: boolean
  private readonly speedVariation: number
  private readonly tickMs: number
  private readonly trains: Train[]
  private readonly owner = new Map<string, Train>()
  private readonly reserved = new Map<string, Train>()
  private readonly positions = new Map<string, 'normal' | 'reverse'>()
  private readonly claimedBy = new Map<string, Train>()
  private readonly operatorAt = new Map<string, number>()
  private readonly clearedAt = new Map<string, number>()
  private readonly heldAreas = new Set<string>()
  private readonly areaOfTurnout = new Map<string, string>()
  private readonly overrides = new Map<string, string>()
  /** Why each turnout a train wanted could not be set, for the wait reason. */
  private readonly notSetWhy = new Map<string, string>()
  private starting = false
  private readonly resumed: boolean
  private aspects: Readonly<Record<string, Aspect>> = {}
  private dropouts: Dropout[] = []
  private now = 0
  private started = false

  constructor(readonly layout: Layout, plans: readonly TrainPlan[], options: SimulationOptions) {
    this.topo = topologyOf(layout)
    this.rng = createRandom(options.seed)
    this.spadChance = options.spadChance ?? 0.02
    this.dropoutChance = options.dropoutChance ?? 0.05
    this.speedFactor = options.speedFactor ?? 1
    this.ignoreSignals = options.ignoreSignals ?? false
    this.speedVariation = options.speedVariation ?? 0.1
    this.tickMs = options.tickMs ?? 10
    for (const t of layout.turnouts) this.positions.set(t.id, options.turnouts?.[t.id] ?? 'normal')
    this.resumed = options.turnouts !== undefined
    for (const a of layout.areas) for (const t of a.turnouts) if (!this.areaOfTurnout.has(t)) this.areaOfTurnout.set(t, a.id)
    this.trains = plans.map((plan) => {
      const baseSpeed = modelMmPerSecond(plan.speedKmh, layout.scale.ratio) * this.speedFactor
      const first = this.blockLength(plan.route[0]!.block)
      return {
        plan, steps: plan.route, baseSpeed, speed: baseSpeed, index: 0, frontMm: first, mode: 'running',
        until: 0, dwellDone: false, reversedAt: -1, spadRolled: false, waitingFor: null, blocks: [],
        rearIndex: 0, claims: new Map(), laps: 0, spads: 0,
      }
    })
  }

  /** Simulation time, ms since start. */
  time(): number {
    return this.now
  }

  /** Every train, in plan order. */
  view(): TrainView[] {
    return this.trains.map(t => ({
      headcode: t.plan.headcode,
      step: t.index % t.steps.length,
      blocks: [...t.blocks],
      mode: t.mode === 'running' && t.waitingFor ? 'waiting' : t.mode,
      waitingFor: t.waitingFor,
      laps: t.laps,
      spads: t.spads,
    }))
  }

  turnoutPositions(): Record<string, 'normal' | 'reverse'> {
    return Object.fromEntries(this.positions)
  }

  /** Puts the trains on the layout: reports every turnout and detector, then sets the first routes. */
  start(): StepResult {
    if (this.started) throw new Error('the simulation has already started')
    this.started = true
    const out = new Output()
    for (const t of this.trains) {
      out.say(0, `${t.plan.headcode}${t.plan.name ? ` (${t.plan.name})` : ''} stands in ${t.steps[0]!.block}, ${t.plan.lengthMm} mm long, runs at ${t.plan.speedKmh} scale km/h`)
      const { blocks, rear } = this.footprint(t)
      t.blocks = blocks
      t.rearIndex = rear
      for (const b of blocks) this.owner.set(b, t)
    }
    // first routes are set before anything is reported: Blockbell then sees them already lying so
    this.starting = !this.resumed
    const claims = new Output()
    for (const t of this.trains) this.claimAhead(t, claims)
    this.starting = false
    out.log.push(...claims.log)
    out.publishes.push(...this.snapshot())
    return out
  }

  /** Whether a signaller holds an area (from Blockbell's `area/<id>`): its turnouts are then theirs to set. */
  setAreaHeld(area: string, held: boolean): StepResult {
    const out = new Output()
    if (held === this.heldAreas.has(area)) return out
    if (held) this.heldAreas.add(area)
    else this.heldAreas.delete(area)
    out.say(this.now, held ? `area ${area} is held by a signaller: its turnouts are left to them` : `area ${area} is free again: trains set its turnouts`)
    return out
  }

  /** The override a signal's indication reported (hold, auto or clear), for judging locks. */
  setOverride(signal: string, override: string | null): void {
    if (override) this.overrides.set(signal, override)
    else this.overrides.delete(signal)
  }

  /** Current state of every turnout and detector as publishes (e.g. to resend after reconnecting). */
  snapshot(): StepResult['publishes'] {
    const out = new Output()
    for (const [id, pos] of this.positions) out.publish(this.now, relative.turnout(id), pos, true)
    for (const b of this.layout.blocks) {
      for (const d of b.detectors) out.publish(this.now, relative.detector(d), this.owner.has(b.id) ? occupiedPayload(this.owner.get(b.id)!) : '0')
    }
    return out.publishes
  }

  /**
   * Moves the simulation on by `dtMs`. `aspects` holds the latest aspect of each signal as Blockbell published
   * it; a signal missing from it is treated as dark, that is at danger.
   */
  step(dtMs: number, aspects: Readonly<Record<string, Aspect>>): StepResult {
    if (!this.started) throw new Error('call start() first')
    const out = new Output()
    let left = dtMs
    this.aspects = aspects
    while (left > 0) {
      const dt = Math.min(this.tickMs, left)
      left -= dt
      this.now += dt
      this.tick(dt, aspects, out)
    }
    return out
  }

  /** A request to throw a turnout (from `turnout/<id>/set`): the turnout is thrown and reports its position. */
  requestTurnout(id: string, position: string, by?: string): StepResult {
    const out = new Output()
    const t = this.topo.turnoutById.get(id)
    if (!t) out.say(this.now, `request to throw unknown turnout ${id} ignored`)
    else if (position !== 'normal' && position !== 'reverse') out.say(this.now, `request to throw ${id} to "${position}" ignored (normal or reverse)`)
    else {
      this.operatorAt.set(id, this.now)
      this.positions.set(id, position)
      const under = this.owner.get(t.block)
      out.publish(this.now, relative.turnout(id), position, true)
      out.say(this.now, `${id} thrown ${position} on request${by ? ` by ${by}` : ''}${under ? ` (under ${under.plan.headcode})` : ''}`)
    }
    return out
  }

  private tick(dt: number, aspects: Readonly<Record<string, Aspect>>, out: Output): void {
    this.runDropouts(out)
    for (const t of this.trains) {
      this.claimAhead(t, out)
      this.advance(t, dt, aspects, out)
      this.releaseClaims(t)
    }
  }

  private blockLength(id: string): number {
    return this.topo.blockById.get(id)!.lengthMm
  }

  private stepAt(t: Train, k: number): RouteStep {
    const n = t.steps.length
    return t.steps[((k % n) + n) % n]!
  }

  private advance(t: Train, dt: number, aspects: Readonly<Record<string, Aspect>>, out: Output): void {
    const hc = t.plan.headcode
    if (t.mode === 'dwelling') {
      if (this.now < t.until) return
      t.mode = 'running'
      t.dwellDone = true
    }
    if (t.mode === 'lifting') {
      if (this.now < t.until) return
      this.reserved.delete(this.stepAt(t, t.index + 1).block)
      this.nextStep(t)
      t.frontMm = this.blockLength(this.stepAt(t, t.index).block)
      t.mode = 'running'
      out.say(this.now, `${hc} set down on ${this.stepAt(t, t.index).block} by hand (undescribed until interposed)`)
      this.occupy(t, out)
    }
    let d = (t.speed * dt) / 1000
    for (let guard = 0; guard < 50; guard++) {
      const end = this.blockLength(this.stepAt(t, t.index).block)
      if (t.frontMm < end) {
        const m = Math.min(d, end - t.frontMm)
        t.frontMm += m
        d -= m
        if (t.frontMm < end) break
      }
      const here = this.stepAt(t, t.index)
      if (here.dwellMs && !t.dwellDone) {
        t.mode = 'dwelling'
        const wait = (here.dwellMs * this.rng.between(0.8, 1.2)) / this.speedFactor
        t.until = this.now + wait
        out.say(this.now, `${hc} stops in ${here.block} for ${(wait / 1000).toFixed(1)} s`)
        break
      }
      const decision = this.decide(t, aspects)
      if (decision.kind === 'wait') {
        if (t.waitingFor !== decision.reason) out.say(this.now, `${hc} waits in ${here.block}: ${decision.reason}`)
        t.waitingFor = decision.reason
        break
      }
      t.waitingFor = null
      if (decision.kind === 'reverse') {
        t.reversedAt = t.index
        t.frontMm = t.plan.lengthMm
        out.say(this.now, `${hc} reverses in ${here.block}`)
        continue
      }
      if (decision.kind === 'lift') {
        const target = this.stepAt(t, t.index + 1).block
        t.mode = 'lifting'
        t.until = this.now + LIFT_MS / this.speedFactor
        this.reserved.set(target, t)
        out.say(this.now, `${hc} lifted off ${here.block} by hand, to go on ${target}`)
        this.vacate(t, out)
        break
      }
      if (decision.spad) {
        t.spads++
        out.say(this.now, `${hc} runs past ${decision.spad} at danger`)
      }
      this.nextStep(t)
      t.frontMm = 0
      this.occupy(t, out)
    }
    if (t.mode !== 'lifting') this.occupy(t, out)
  }

  private nextStep(t: Train): void {
    t.index++
    if (t.index % t.steps.length === 0) t.laps++
    t.dwellDone = false
    t.spadRolled = false
    t.speed = t.baseSpeed * this.rng.between(1 - this.speedVariation, 1 + this.speedVariation)
  }

  /** Whether the train at the end of its block can move on, and how. */
  private decide(t: Train, aspects: Readonly<Record<string, Aspect>>): Decision {
    const here = this.stepAt(t, t.index)
    const next = this.stepAt(t, t.index + 1)
    const prev = this.stepAt(t, t.index - 1)
    const ahead = this.owner.get(next.block) ?? this.reserved.get(next.block)
    if (next.lift) return ahead && ahead !== t ? { kind: 'wait', reason: `${next.block} is occupied by ${ahead.plan.headcode}` } : { kind: 'lift' }
    if (next.block === prev.block && !here.lift && t.reversedAt !== t.index) return { kind: 'reverse' }
    if (ahead && ahead !== t) return { kind: 'wait', reason: `${next.block} is occupied by ${ahead.plan.headcode}` }
    for (const need of this.movesInto(t)) {
      if (this.positions.get(need.turnout.id) !== this.wanted(need)) {
        const why = this.notSetWhy.get(need.turnout.id)
        return { kind: 'wait', reason: `${need.turnout.id} is not set for ${need.leg}${why ? ` (${why})` : ''}` }
      }
    }
    const sig = this.topo.stopAt.get(placeKey(here.block, next.block))
    if (!sig || this.ignoreSignals) return { kind: 'go', spad: null }
    const aspect = aspects[sig.id]
    if (aspect === undefined) return { kind: 'wait', reason: `${sig.id} shows nothing yet` }
    if (aspect !== 'danger') return { kind: 'go', spad: null }
    // A driver can miss a signal as the train runs up to it, or start against it after a stop; a train already
    // waiting for something else stays put.
    if (!t.spadRolled && t.waitingFor === null) {
      t.spadRolled = true
      if (this.rng.chance(this.spadChance)) return { kind: 'go', spad: sig.id }
    }
    return { kind: 'wait', reason: `${sig.id} at danger` }
  }

  /** Turnouts the move from the train's block into the next one runs through. */
  private movesInto(t: Train): TurnoutNeed[] {
    const here = this.stepAt(t, t.index)
    const next = this.stepAt(t, t.index + 1)
    const after = this.stepAt(t, t.index + 2)
    const leaving = needsThrough(this.topo, here.block, here.lift ? null : this.stepAt(t, t.index - 1).block, next.block)
    return [
      ...leaving.filter(n => n.facing),
      ...needsThrough(this.topo, next.block, here.block, after.lift ? null : after.block),
    ]
  }

  private wanted(need: TurnoutNeed): 'normal' | 'reverse' {
    return need.leg === need.turnout.normal ? 'normal' : 'reverse'
  }

  /** Claims, and sets where it may, the turnouts of the route from the train's block to the next signal's. */
  private claimAhead(t: Train, out: Output): void {
    // a train lifted off sets the turnouts it needs where it will be set down, while that block is free
    const from = t.mode === 'lifting' ? t.index + 1 : t.index
    for (let k = from; k < from + 12; k++) {
      const cur = this.stepAt(t, k)
      if (k > from && cur.lift) return
      const nextStep = this.stepAt(t, k + 1)
      const next = nextStep.lift ? null : nextStep.block
      const prev = cur.lift ? null : this.stepAt(t, k - 1).block
      for (const need of needsThrough(this.topo, cur.block, prev, next)) {
        if (k === from && !need.facing && t.mode !== 'lifting') continue
        this.claim(t, need, k, out)
      }
      if (next === null) return
      if (k > t.index && this.topo.stopAt.has(placeKey(cur.block, next))) return
    }
  }

  private claim(t: Train, need: TurnoutNeed, k: number, out: Output): void {
    const id = need.turnout.id
    const holder = this.claimedBy.get(id)
    if (holder && holder !== t) return
    const want = this.wanted(need)
    if (this.positions.get(id) !== want) {
      if (holder === t && (t.claims.get(id) ?? -1) < k) return // still needed the other way for an earlier step
      const operator = this.operatorAt.get(id)
      if (operator !== undefined && this.now - operator < OPERATOR_HOLD_MS) return
      const area = this.areaOfTurnout.get(id)
      if (area && this.heldAreas.has(area)) {
        this.notSetWhy.set(id, `left to the signaller holding ${area}`)
        return
      }
      const lock = this.starting ? null : this.lock(id)
      if (lock) {
        this.notSetWhy.set(id, lock.reason === 'occupied' ? `locked: ${lock.block} occupied` : `locked: ${lock.signal} reads over it`)
        return
      }
      this.notSetWhy.delete(id)
      this.positions.set(id, want)
      out.publish(this.now, relative.turnout(id), want, true)
      out.say(this.now, `${id} set ${want} for ${t.plan.headcode}`)
    }
    this.claimedBy.set(id, t)
    t.claims.set(id, Math.max(k, t.claims.get(id) ?? k))
  }

  /**
   * The turnout's lock as Blockbell may see it now: a block left within CLEAR_MARGIN_MS still counts as
   * occupied, and a stop signal counts as off if its last indication was off or if, as far as the trains
   * know, nothing holds it at danger (not held, its section free, its route set): its indication may be on
   * the way. Ignoring signals (no Blockbell publishing indications), only track locking applies.
   */
  private lock(turnout: string): TurnoutLock {
    const recently = (b: string) => this.owner.has(b) || this.now - (this.clearedAt.get(b) ?? -Infinity) < CLEAR_MARGIN_MS
    const position = (id: string) => this.positions.get(id) ?? 'unknown'
    return lockOf(this.topo, turnout, {
      occupied: recently,
      position,
      aspect: (id) => {
        if (this.ignoreSignals) return 'danger'
        const shown = this.aspects[id]
        if (shown !== undefined && shown !== 'danger') return shown
        if (this.overrides.get(id) === 'hold') return 'danger'
        const trace = traceSection(this.topo, this.topo.signalById.get(id)!, position)
        return trace.routeSet && !trace.blocks.some(b => this.owner.has(b)) ? 'proceed' : 'danger'
      },
    })
  }

  private releaseClaims(t: Train): void {
    for (const [id, k] of t.claims) {
      if (t.rearIndex > k) {
        t.claims.delete(id)
        if (this.claimedBy.get(id) === t) this.claimedBy.delete(id)
      }
    }
  }

  /** Blocks under the train now, rear first, with the running count of the rear's step. */
  private footprint(t: Train): { blocks: string[], rear: number } {
    const blocks = [this.stepAt(t, t.index).block]
    let k = t.index
    let remaining = t.plan.lengthMm - t.frontMm
    while (remaining > 0) {
      k--
      const b = this.stepAt(t, k).block
      blocks.unshift(b)
      remaining -= this.blockLength(b)
    }
    return { blocks, rear: k }
  }

  /** Brings the train's occupancy up to date: the front's new blocks first, then those its rear has left. */
  private occupy(t: Train, out: Output): void {
    const { blocks, rear } = this.footprint(t)
    t.rearIndex = rear
    const entered = blocks.filter(b => !t.blocks.includes(b))
    const left = t.blocks.filter(b => !blocks.includes(b))
    t.blocks = blocks
    for (const b of entered) {
      this.owner.set(b, t)
      this.report(b, occupiedPayload(t), out)
      out.say(this.now, `${t.plan.headcode} enters ${b}${this.detectorNote(b, '1')}`)
      this.maybeDropout(t, b)
    }
    for (const b of left) this.leave(t, b, out)
  }

  private vacate(t: Train, out: Output): void {
    for (const b of t.blocks) this.leave(t, b, out)
    t.blocks = []
    t.rearIndex = t.index + 1
    this.releaseClaims(t)
  }

  private leave(t: Train, b: string, out: Output): void {
    if (this.owner.get(b) === t) this.owner.delete(b)
    this.clearedAt.set(b, this.now)
    this.report(b, '0', out)
    out.say(this.now, `${t.plan.headcode} clears ${b}${this.detectorNote(b, '0')}`)
  }

  private detectorNote(block: string, payload: string): string {
    const ds = this.topo.blockById.get(block)!.detectors
    return ds.length ? ` (${ds.map(d => `${d}=${payload}`).join(', ')})` : ' (no detector)'
  }

  private report(block: string, payload: string, out: Output): void {
    for (const d of this.topo.blockById.get(block)!.detectors) out.publish(this.now, relative.detector(d), payload)
  }

  private maybeDropout(t: Train, block: string): void {
    const detectors = this.topo.blockById.get(block)!.detectors
    if (detectors.length === 0 || !this.rng.chance(this.dropoutChance)) return
    this.dropouts.push({ block, detector: this.rng.pick(detectors), train: t, at: this.now + this.rng.between(300, 2500), restoreAt: null })
  }

  /** Dirty track: the detector reports clear for 30-90 ms while the train stands or runs on the block. */
  private runDropouts(out: Output): void {
    if (this.dropouts.length === 0) return
    const keep: Dropout[] = []
    for (const d of this.dropouts) {
      const still = this.owner.get(d.block) === d.train
      if (d.restoreAt === null) {
        if (this.now < d.at) keep.push(d)
        else if (still) {
          out.publish(this.now, relative.detector(d.detector), '0')
          out.say(this.now, `dirty track: ${d.detector}=0 in ${d.block} under ${d.train.plan.headcode}`)
          d.restoreAt = this.now + this.rng.between(30, 90)
          keep.push(d)
        }
      } else if (this.now < d.restoreAt) keep.push(d)
      else if (still) {
        out.publish(this.now, relative.detector(d.detector), '1')
        out.say(this.now, `dirty track: ${d.detector}=1 again`)
      }
    }
    this.dropouts = keep
  }
}

/** What a detector under `t` reports: `1`, or with the train's decoder address when it has one. */
function occupiedPayload(t: Train): string {
  return t.plan.address === undefined ? '1' : JSON.stringify({ occupied: true, address: t.plan.address })
}
