import type { LayoutEvent, TurnoutPosition } from '../signalling'
import type { JournalPayload } from '../types/sessions'

/** Journal entry types that carry an input of the engine; replaying them through the engine rebuilds the state. */
export const FOLDED_TYPES = ['detector-input', 'turnout-input', 'command'] as const

export interface FoldableRow {
  type: string
  at: number
  payload: JournalPayload
  userId: number | null
}

/**
 * The engine event a journal entry stands for, or null when it is not an input of the engine (area commands,
 * the engine's own changes, dropouts). The live runtime journals each input it applied with the values below,
 * so the same events through the same engine give the same state.
 */
export function journalEntryToEvent(row: FoldableRow): LayoutEvent | null {
  const p = row.payload ?? {}
  const at = row.at
  const by = row.userId == null ? undefined : String(row.userId)
  switch (row.type) {
    case 'detector-input':
      return typeof p.detector === 'string' ? { type: 'detector', detector: p.detector, occupied: Boolean(p.occupied), at } : null
    case 'turnout-input':
      return typeof p.turnout === 'string' ? { type: 'turnout', turnout: p.turnout, position: p.position as TurnoutPosition, at } : null
    case 'command':
      switch (p.action) {
        case 'set-override': return { type: 'override', signal: p.signal, mode: p.mode, at, by }
        case 'set-turnout': return { type: 'turnout', turnout: p.turnout, position: p.position, at, by }
        case 'interpose': return { type: 'interpose', block: p.block, description: p.description, at, by }
        case 'acknowledge': return { type: 'acknowledge', alarm: p.alarm, at, by }
        default: return null
      }
    default:
      return null
  }
}
