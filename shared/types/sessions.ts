import type { Alarm, Indication, OverrideMode, TurnoutPosition } from '../signalling/types'
import type { Layout } from '../schemas/layout'

/** A journal entry's payload: free-form JSON written by the live side, read here field by field. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any
export type JournalPayload = Record<string, any>

/** One line of the Sessions list. */
export interface SessionListItem {
  id: number
  layout: { slug: string, name: string }
  name: string
  startedAt: string
  endedAt: string | null
  /** Seconds from start to end (or to now while it runs). */
  durationSeconds: number
  fastClockRatio: number
  fastClockStart: string | null
  startedBy: string | null
  operators: string[]
  trainMoves: number
  signalsPassedAtDanger: number
  dropouts: number
}

export interface AreaShift { area: string, areaName: string, person: string, from: string, to: string, seconds: number }
export interface CommandCount { kind: string, person: string | null, count: number }
export interface TrainRun { description: string, moves: number, blocks: string[], firstAt: string, lastAt: string }
export interface DangerPass {
  alarm: string
  signal: string
  block: string
  description: string | null
  at: string
  acknowledgedAt: string | null
  secondsToAcknowledge: number | null
  acknowledgedBy: string | null
}
export interface BlockDropouts { block: string, blockName: string, count: number }
export interface SpeedReading {
  description: string
  block: string
  blockName: string
  at: string
  lengthMm: number
  seconds: number
  kmh: number
  mph: number
}

export interface SessionSummary {
  durationSeconds: number
  events: number
  areas: AreaShift[]
  commands: CommandCount[]
  trains: TrainRun[]
  dangerPasses: DangerPass[]
  dropouts: BlockDropouts[]
  speeds: SpeedReading[]
  scale: { name: string, ratio: number }
}

export interface SessionDetail extends SessionListItem {
  notes: string | null
  endedBy: string | null
  running: boolean
  /** The layout version the session ran on, and its definition (what the replay draws). */
  layoutVersion: number
  /** false for a session from before versions were recorded: then the current version stands in. */
  layoutVersionRecorded: boolean
  definition: Layout
  /** Blocks in the layout's order with their lengths, for choosing the graph's route. */
  blocks: { id: string, name: string, lengthMm: number }[]
  summary: SessionSummary
}

/** One row of a session's event log, in words. */
export interface SessionEventRow {
  id: string
  at: string
  kind: string
  subject: string | null
  person: string | null
  text: string
}

export interface SessionEventsPage { rows: SessionEventRow[], next: string | null }

export interface ReplayState {
  at: number
  state: {
    occupied: Record<string, boolean>
    turnouts: Record<string, TurnoutPosition>
    overrides: Record<string, OverrideMode>
    descriptions: Record<string, string>
    alarms: Alarm[]
    indications: Record<string, Indication>
  }
}

/** The time-distance graph: each described train's path, as [epoch ms, distance in mm along the route]. */
export interface GraphData {
  route: { id: string, name: string, startMm: number, lengthMm: number }[]
  trains: { description: string, points: ([number, number] | null)[] }[]
  dangerPasses: { at: number, mm: number, signal: string, description: string | null }[]
  /** The span drawn: the whole session, or the part asked for. */
  from: number
  to: number
  /** Set when the lines were thinned to what the graph's width can show: how many points there were and are. */
  thinning?: { columns: number, points: number, shown: number } | null
}
