import { z } from '../schemas/zod'
import { ItemId } from '../schemas/layout'
import type { Layout } from '../schemas/layout'
import type { Alarm, Change, Indication, OverrideMode, TurnoutPosition } from '../signalling'
import type { Role } from '../utils/roles'
import { OVERRIDE_MODES, TURNOUT_LEGS } from '../signalling/values'
import type { TurnoutLockInfo } from './locking'

/**
 * Blockbell's live protocol between a panel and the server, over one WebSocket at `/live`.
 * Every message is a JSON object with a `type`.
 *
 * Panel -> server: `subscribe` (one layout per connection), `resync`, `command`, `ping`.
 * Server -> panel: `welcome` on connect, `snapshot` after subscribe or resync, then `delta`s numbered by a
 * per-layout `seq` (a panel that sees a gap sends `resync`), `command-result` for each command, `error` for a
 * message it could not accept (the connection stays up), `pong`, and a `heartbeat` every HEARTBEAT_MS with the
 * server's clock, so a panel knows within seconds when the server has gone quiet (and how its clock differs).
 *
 * A command carries `madeAt`, when the person made it (epoch ms on the server's clock, as the panel estimates
 * it from the heartbeats); the server refuses one that reaches it more than COMMAND_MAX_AGE_MS later.
 */

export const MAX_MESSAGE_BYTES = 16 * 1024

/** The server sends a heartbeat this often (at least every 2 s, so a panel can say so within 5 s). */
export const HEARTBEAT_MS = 1000

/** A command that reaches the server later than this after it was made is refused, not carried out. */
export const COMMAND_MAX_AGE_MS = 5000

const CommandId = z.string().min(1, 'id is required').max(40, 'id is at most 40 characters')
const Revision = z.number({ error: 'revision is a number' }).int().nonnegative()

export const LiveCommand = z.discriminatedUnion('action', [
  z.object({ action: z.literal('take-area'), area: ItemId }),
  z.object({ action: z.literal('release-area'), area: ItemId }),
  z.object({ action: z.literal('force-release'), area: ItemId }),
  z.object({ action: z.literal('hand-over'), area: ItemId, to: z.number().int().positive() }),
  z.object({ action: z.literal('accept-hand-over'), area: ItemId }),
  z.object({ action: z.literal('decline-hand-over'), area: ItemId }),
  z.object({ action: z.literal('set-override'), signal: ItemId, mode: z.enum(OVERRIDE_MODES), revision: Revision }),
  z.object({ action: z.literal('set-turnout'), turnout: ItemId, position: z.enum(TURNOUT_LEGS), revision: Revision }),
  /** An admin's throw of a locked turnout, after the panel asked them to confirm it. */
  z.object({ action: z.literal('force-turnout'), turnout: ItemId, position: z.enum(TURNOUT_LEGS), revision: Revision }),
  z.object({ action: z.literal('interpose'), block: ItemId, description: z.string().trim().max(16, 'a description is at most 16 characters') }),
  z.object({ action: z.literal('acknowledge'), alarm: z.string().min(1).max(40) }),
], { error: 'action is one of take-area, release-area, force-release, hand-over, accept-hand-over, decline-hand-over, set-override, set-turnout, force-turnout, interpose, acknowledge' })
export type LiveCommand = z.infer<typeof LiveCommand>

export const ClientMessage = z.discriminatedUnion('type', [
  z.object({ type: z.literal('subscribe'), layout: z.string().min(1).max(64) }),
  z.object({ type: z.literal('resync') }),
  z.object({ type: z.literal('command'), id: CommandId, command: LiveCommand, madeAt: z.number({ error: 'madeAt is a time in epoch milliseconds' }).int().positive().optional() }),
  z.object({ type: z.literal('ping') }),
], { error: 'type is one of subscribe, resync, command, ping' })
export type ClientMessage = z.infer<typeof ClientMessage>

export interface LiveUser { id: number, name: string, role: Role }

/** Who holds an area of control (null: nobody). */
export type AreaHolders = Record<string, LiveUser | null>

/**
 * Areas whose holder has had no panel connected for the grace period (area id -> when their last panel
 * closed, epoch ms): any signaller may take such an area.
 */
export type UnattendedAreas = Record<string, number>

/** An area offered by its holder to another signaller, who accepts or declines before `until` (epoch ms). */
export interface HandOverOffer { from: LiveUser, to: LiveUser, at: number, until: number }
export type HandOverOffers = Record<string, HandOverOffer>

/** A controller (detector or signal decoder board) as its MQTT status topic reports it. */
export interface DeviceStatus { online: boolean, at: number }

/** The running operating session, when there is one, with its fast clock. */
export interface LiveSession {
  id: number
  name: string
  startedAt: number
  /** Fast clock: model minutes per real minute, and the model time of day at `startedAt` ("HH:MM"). */
  fastClockRatio: number
  fastClockStart: string | null
}

/** One line of the panel's feed of latest events. */
export interface FeedEntry { at: number, text: string, tone: 'info' | 'warn' | 'alarm' }

/** Changes the live runtime adds to the engine's own. */
export type LiveChange
  = | Change
    | { type: 'areas', areas: AreaHolders }
    | { type: 'unattended', areas: UnattendedAreas }
    | { type: 'offers', offers: HandOverOffers }
    | { type: 'operators', operators: LiveUser[] }
    | { type: 'device', device: string, status: DeviceStatus }
    | { type: 'dropout', block: string, detector: string, at: number }
    | { type: 'feed', entry: FeedEntry }
    | { type: 'session', session: LiveSession | null }
  /** A turnout's lock came on, changed or came off (null). */
    | { type: 'lock', turnout: string, lock: TurnoutLockInfo | null }

export interface LiveState {
  occupied: Record<string, boolean>
  turnouts: Record<string, TurnoutPosition>
  overrides: Record<string, OverrideMode>
  descriptions: Record<string, string>
  alarms: Alarm[]
  indications: Record<string, Indication>
  signalRevisions: Record<string, number>
  turnoutRevisions: Record<string, number>
  /** Block -> epoch ms of the last detector dropout (a clear followed by occupied within the debounce). */
  dropouts: Record<string, number>
  /** Locked turnouts only: why each may not be thrown now (shared/signalling/locking.ts). */
  locks: Record<string, TurnoutLockInfo>
}

export type ServerMessage
  = | { type: 'welcome', user: LiveUser }
    | {
      type: 'snapshot'
      layout: string
      seq: number
      definition: Layout
      state: LiveState
      areas: AreaHolders
      operators: LiveUser[]
      devices: Record<string, DeviceStatus>
      session: LiveSession | null
      unattended?: UnattendedAreas
      offers?: HandOverOffers
      /** The latest feed entries, oldest first (newest last), as a panel keeps them. */
      feed: FeedEntry[]
      /** The server's clock (epoch ms) when the snapshot was made: panels work the fast clock out from it. */
      serverTime: number
    }
    | { type: 'delta', layout: string, seq: number, changes: LiveChange[] }
    | { type: 'command-result', id: string, ok: true, note?: string }
    | { type: 'command-result', id: string, ok: false, reason: string }
    | { type: 'error', message: string }
    | { type: 'pong' }
    | { type: 'heartbeat', at: number }
