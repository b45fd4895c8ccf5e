import type { Layout } from '../schemas/layout'
import type { LiveCommand } from './protocol'

/** A command as the panel tracks it: sent (pending), then done or refused by the server's command-result. */
export type CommandStatus = 'pending' | 'done' | 'refused' | 'no-answer'

export interface CommandRecord {
  id: string
  command: LiveCommand
  /** What the command is about, e.g. "signal:SU1", so a control can show its own command's state. */
  target: string
  /** Plain words for the command, e.g. "Hold Quillbury up home". */
  label: string
  status: CommandStatus
  reason: string | null
  at: number
}

/** How long a command may wait for its command-result before the panel says there was no answer. */
export const COMMAND_TIMEOUT_MS = 10_000
export const NO_ANSWER_LOST = 'The connection dropped before the server answered: look at the diagram to see whether it took effect.'
export const NO_ANSWER_TIMEOUT = 'No answer from the server within 10 seconds: look at the diagram to see whether it took effect.'
export const NOT_CONNECTED = 'Not connected: the command was not sent. Wait until the panel is live again.'
export const NO_WORD = 'No word from the server: the command was not sent, as the picture may be out of date. Wait until the panel is live again.'

/** Taps on the same item within this time count once (a double tap, a shaky finger). */
export const REPEAT_TAP_MS = 600

/** How long the panel waits for a thrown turnout to report its new position before it says none came. */
export const THROW_REPORT_MS = 5_000

/** A throw the panel asked for, until the turnout reports the position asked for. */
export interface ThrowRequest { commandId: string, position: 'normal' | 'reverse', at: number, late: boolean }

let counter = 0

/** A client id for a command: unique within this page, at most 40 characters (the protocol's limit). */
export function newCommandId(now = Date.now()): string {
  counter = (counter + 1) % 1_000_000
  return `p${now.toString(36)}-${counter.toString(36)}-${Math.random().toString(36).slice(2, 8)}`
}

export function commandTarget(c: LiveCommand): string {
  switch (c.action) {
    case 'take-area': case 'release-area': case 'force-release': case 'hand-over':
    case 'accept-hand-over': case 'decline-hand-over': return `area:${c.area}`
    case 'set-override': return `signal:${c.signal}`
    case 'set-turnout': case 'force-turnout': return `turnout:${c.turnout}`
    case 'interpose': return `block:${c.block}`
    case 'acknowledge': return `alarm:${c.alarm}`
  }
}

const nameOf = (list: { id: string, name: string }[] | undefined, id: string) => list?.find(x => x.id === id)?.name ?? id

export function commandLabel(c: LiveCommand, def: Layout | null, people: { id: number, name: string }[] = []): string {
  switch (c.action) {
    case 'take-area': return `Take ${nameOf(def?.areas, c.area)}`
    case 'release-area': return `Release ${nameOf(def?.areas, c.area)}`
    case 'force-release': return `Force-release ${nameOf(def?.areas, c.area)}`
    case 'hand-over': return `Hand ${nameOf(def?.areas, c.area)} over to ${people.find(p => p.id === c.to)?.name ?? `person ${c.to}`}`
    case 'accept-hand-over': return `Accept ${nameOf(def?.areas, c.area)}`
    case 'decline-hand-over': return `Decline ${nameOf(def?.areas, c.area)}`
    case 'set-override': return `${{ hold: 'Hold', auto: 'Auto', clear: 'Clear' }[c.mode]} ${nameOf(def?.signals, c.signal)}`
    case 'set-turnout': return `Throw ${c.turnout} to ${c.position}`
    case 'force-turnout': return `Force ${c.turnout} to ${c.position}`
    case 'interpose': return c.description ? `Interpose ${c.description} in ${nameOf(def?.blocks, c.block)}` : `Clear the berth in ${nameOf(def?.blocks, c.block)}`
    case 'acknowledge': return 'Acknowledge the alarm'
  }
}
