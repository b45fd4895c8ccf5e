import nodemailer from 'nodemailer'
import type { Transaction } from 'sequelize'
import { createOutbox, type MailMessage, type Outbox } from '../mail/outbox'
import { mailSettings, type MailSettings } from '../mail/settings'
import { sessionSummaryMail, type SessionSummary } from '../mail/templates'
import type { OutboxMessage } from '../database/models'
import type { OutboxView } from '#shared/types/mail'
import { useDatabase } from './database'

// The one mail service of Blockbell: invitations, password resets, session summaries and (later) maintenance
// reminders all go through queueMail, into the outbox table, and out through one SMTP transport.

let outbox: Outbox | undefined
let settings: MailSettings | undefined

export function useMailSettings(): MailSettings {
  settings ??= mailSettings()
  return settings
}

function createTransport(config: MailSettings) {
  if (config.smtpUrl) return nodemailer.createTransport(config.smtpUrl)
  // The local fake server speaks plain SMTP on loopback (no TLS, no sign-in).
  return nodemailer.createTransport({ host: '127.0.0.1', port: config.fakeSmtpPort, secure: false, ignoreTLS: true })
}

export function useMailOutbox(): Outbox {
  if (!outbox) {
    const config = useMailSettings()
    outbox = createOutbox({
      db: useDatabase(), transport: createTransport(config), from: config.from, local: !config.smtpUrl,
      retryBaseMs: config.retryBaseMs, maxAttempts: config.maxAttempts, pollMs: config.pollMs,
    })
  }
  return outbox
}

export async function closeMail(): Promise<void> {
  if (!outbox) return
  const open = outbox
  outbox = undefined
  await open.stop()
}

/** A full URL for a path of this Blockbell (BLOCKBELL_PUBLIC_URL). */
export function publicLink(path: string): string {
  return `${useMailSettings().publicUrl}${path}`
}

export function queueMail(message: MailMessage, transaction?: Transaction): Promise<OutboxMessage> {
  return useMailOutbox().queue(message, transaction)
}

export function toOutboxView(row: OutboxMessage): OutboxView {
  return {
    id: row.id, to: row.toAddress, subject: row.subject, state: row.state, text: row.text, html: row.html,
    at: row.createdAt.toISOString(), kind: row.kind, attempts: row.attempts,
    sentAt: row.sentAt ? row.sentAt.toISOString() : null, lastError: row.lastError,
  }
}

export const OUTBOX_PAGE = 200

export async function listOutbox(): Promise<OutboxView[]> {
  const rows = await useDatabase().models.OutboxMessage.findAll({ order: [['createdAt', 'DESC'], ['id', 'DESC']], limit: OUTBOX_PAGE })
  return rows.map(toOutboxView)
}

/** Queues a failed message again; null when there is no such message. */
export async function retryOutboxMessage(id: number): Promise<OutboxView | null> {
  const row = await useMailOutbox().retry(id)
  return row && toOutboxView(row)
}

/**
 * Tells each operator of an operating session what happened in it. Called by the sessions code when a
 * session ends; one message per operator, each with a link to the session's review.
 */
export async function sendSessionSummary(summary: SessionSummary, operators: { email: string, name: string }[]): Promise<OutboxMessage[]> {
  const reviewUrl = publicLink(`/sessions/${summary.sessionId}`)
  const publicUrl = useMailSettings().publicUrl
  const queued: OutboxMessage[] = []
  for (const operator of operators) {
    const mail = sessionSummaryMail({ ...summary, name: operator.name, reviewUrl, publicUrl })
    queued.push(await queueMail({ kind: 'session-summary', to: operator.email, ...mail }))
  }
  return queued
}
