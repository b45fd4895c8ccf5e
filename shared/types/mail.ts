import type { Role } from '../utils/roles'

/** Where a message stands: waiting (or between retries), sent, kept by the local fake server, failed. */
export const OUTBOX_STATES = ['queued', 'sent', 'kept', 'failed'] as const
export type OutboxState = typeof OUTBOX_STATES[number]

export const OUTBOX_STATE_LABELS: Record<OutboxState, string> = {
  queued: 'Waiting to send',
  sent: 'Sent',
  kept: 'Kept locally',
  failed: 'Failed',
}

/** A message as the Outbox screen shows it. */
export interface OutboxView {
  id: number
  to: string
  subject: string
  state: OutboxState
  text: string
  html: string
  at: string
  kind: string
  attempts: number
  sentAt: string | null
  lastError: string | null
}

/** An open invitation as the People screen shows it. */
export interface InvitationView {
  id: number
  email: string
  role: Role
  invitedBy: string | null
  createdAt: string
  expiresAt: string
  expired: boolean
  mailState: OutboxState | null
}
