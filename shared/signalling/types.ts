import type { Layout } from '../schemas/layout'

import type { Aspect, OverrideMode, TurnoutPosition } from './values'

export type { Layout }

export type { Aspect, OverrideMode, TurnoutPosition }

/** What a signal shows, as the panels and the hardware receive it. */
export interface Indication {
  aspect: Aspect
  /** Junction indicator position when lit, else null. Lit only with a proceed-type aspect. */
  indicator: string | null
  override: OverrideMode
  /** True where a `clear` override shows more than the line ahead justifies. */
  exceedsLine: boolean
}

interface AlarmBase {
  id: string
  /** The block the train entered past the signal, or the block of the turnout that moved under a lock. */
  block: string
  /** Train description of the train in that block, if it had one. */
  description: string | null
  /** Epoch milliseconds of the event that raised it. */
  at: number
  acknowledgedAt: number | null
  acknowledgedBy?: string
}

/** A signal passed at danger. Kept after acknowledgement with `acknowledgedAt` set. */
export interface SpadAlarm extends AlarmBase {
  kind: 'spad'
  signal: string
}

/** A turnout reported a move while it was locked (its block occupied, or a signal reading over it off). */
export interface TurnoutLockAlarm extends AlarmBase {
  kind: 'turnout-under-lock'
  turnout: string
  /** The signal whose route locked it, or null for a track lock (its block occupied). */
  signal: string | null
}

export type Alarm = SpadAlarm | TurnoutLockAlarm

/**
 * The whole live state of one layout. Plain JSON data: it can be stored, sent and compared.
 * Treat it as read-only; the engine replaces or updates it. Signal indications are derived from it
 * (computeIndications, or the live engine's indications()).
 */
export interface LayoutState {
  /** Number of events that changed the state. */
  revision: number
  /** Every detector of the layout: true while it reports occupied. */
  detectors: Record<string, boolean>
  /** Every block: true while any of its detectors reports occupied. */
  occupied: Record<string, boolean>
  /** Occupied blocks only: epoch milliseconds at which the block last became occupied. */
  enteredAt: Record<string, number>
  turnouts: Record<string, TurnoutPosition>
  overrides: Record<string, OverrideMode>
  /** Described blocks only (berths): the train description standing in that block. */
  descriptions: Record<string, string>
  alarms: Alarm[]
  /** Per signal: raised each time its override changes. Commands made against an older revision are stale. */
  signalRevisions: Record<string, number>
  /** Per turnout: raised each time its position changes. */
  turnoutRevisions: Record<string, number>
  /** Number of alarms raised so far; alarm ids are made from it. */
  alarmCount: number
}

export interface DetectorEvent {
  type: 'detector'
  detector: string
  occupied: boolean
  at: number
}
export interface TurnoutEvent {
  type: 'turnout'
  turnout: string
  position: TurnoutPosition
  at: number
  by?: string
}
export interface OverrideEvent {
  type: 'override'
  signal: string
  mode: OverrideMode
  at: number
  by?: string
}
export interface InterposeEvent {
  type: 'interpose'
  block: string
  /** The description to write into the block; an empty string cancels the description there. */
  description: string
  at: number
  by?: string
}
export interface AcknowledgeEvent {
  type: 'acknowledge'
  alarm: string
  at: number
  by?: string
}
export type LayoutEvent = DetectorEvent | TurnoutEvent | OverrideEvent | InterposeEvent | AcknowledgeEvent

/** A detector reported a new state (whether or not its block's occupancy changed). */
export interface DetectorChange {
  type: 'detector'
  detector: string
  block: string
  occupied: boolean
  at: number
}
export interface BlockChange {
  type: 'block'
  block: string
  occupied: boolean
  at: number
}
export interface IndicationChange {
  type: 'indication'
  signal: string
  indication: Indication
  previous: Indication
}
export interface TurnoutChange {
  type: 'turnout'
  turnout: string
  position: TurnoutPosition
  revision: number
  at: number
  by?: string
}
export interface OverrideChange {
  type: 'override'
  signal: string
  mode: OverrideMode
  revision: number
  at: number
  by?: string
}
export interface DescriptionChange {
  type: 'description'
  block: string
  /** The description now in the block, or null when the berth was cleared. */
  description: string | null
  /**
   * step: moved in from block `from` as the train entered; interpose: typed in by an operator;
   * clear: the block cleared, or an empty interpose cancelled it; lost: the block cleared and its
   * description is nowhere else on the layout (no occupied, undescribed block ahead to move on to).
   */
  reason: 'step' | 'interpose' | 'clear' | 'lost'
  from?: string
  /** With reason lost: the description that was lost. */
  lost?: string
  at: number
  by?: string
}
export interface AlarmChange {
  type: 'alarm'
  alarm: Alarm
}
export interface AlarmAcknowledgedChange {
  type: 'alarm-acknowledged'
  alarm: Alarm
}
/** Scale speed of a described train over `block`, from entering it to entering the next block. */
export interface SpeedChange {
  type: 'speed'
  block: string
  description: string
  lengthMm: number
  seconds: number
  kmh: number
  mph: number
  at: number
}
export interface ErrorChange {
  type: 'error'
  code: 'invalid-event' | 'unknown-id' | 'already-acknowledged'
  /** Where in the event the problem is, e.g. "detector". */
  path: string
  message: string
}
export type Change
  = | DetectorChange
    | BlockChange
    | IndicationChange
    | TurnoutChange
    | OverrideChange
    | DescriptionChange
    | AlarmChange
    | AlarmAcknowledgedChange
    | SpeedChange
    | ErrorChange

export interface ValidationError {
  path: string
  message: string
}
export type ValidationResult = { ok: true, layout: Layout } | { ok: false, errors: ValidationError[] }
