import { QueryTypes, type Transaction } from 'sequelize'
import type { Database } from '../database/connection'
import type { OutboxMessage } from '../database/models'
import type { OutboxState } from '#shared/types/mail'

/** A message to send: the outbox stores it first, so it survives a restart. */
export interface MailMessage { kind: string, to: string, subject: string, text: string, html: string }

/** What nodemailer's transport offers (a narrow view, so any SMTP transport fits). */
export interface MailTransport {
  sendMail: (mail: { from: string, to: string, subject: string, text: string, html: string }) => Promise<{ response?: string }>
}

export interface OutboxOptions {
  db: Database
  transport: MailTransport
  from: string
  /** True when the transport is the local fake server: delivered messages are "kept", not "sent". */
  local: boolean
  retryBaseMs: number
  maxAttempts: number
  pollMs: number
  /** A claimed message is tried again after this long if the process died while sending it. */
  leaseMs?: number
  log?: (line: string) => void
}

export interface Outbox {
  queue: (message: MailMessage, transaction?: Transaction) => Promise<OutboxMessage>
  /** Sends every message that is due now; resolves when done (tests and shutdown use it). */
  runOnce: () => Promise<void>
  retry: (id: number) => Promise<OutboxMessage | null>
  start: () => void
  stop: () => Promise<void>
}

/** Wait before attempt `attempt + 1`: base, 2x base, 4x base… capped at an hour. */
export function retryDelayMs(attempt: number, baseMs: number, capMs = 3_600_000): number {
  return Math.min(capMs, baseMs * 2 ** Math.max(0, attempt - 1))
}

/** A 5xx reply is permanent (RFC 5321 §4.2.1): trying again cannot help. Everything else may pass later. */
export function isPermanentFailure(error: unknown): boolean {
  const code = (error as { responseCode?: number }).responseCode
  return typeof code === 'number' && code >= 500 && code < 600
}

interface ClaimedRow { id: number, to_address: string, subject: string, text: string, html: string, attempts: number }

export function createOutbox(options: OutboxOptions): Outbox {
  const { db, transport } = options
  const leaseMs = options.leaseMs ?? 120_000
  const log = options.log ?? (line => console.warn(`[blockbell] mail: ${line}`))
  let timer: NodeJS.Timeout | undefined
  let running: Promise<void> | undefined
  let again = false
  let started = false

  // Claims due messages (several servers may share the table: SKIP LOCKED keeps them apart) and moves their
  // next attempt past the lease, so a crash while sending only delays the message.
  async function claim(): Promise<ClaimedRow[]> {
    return db.sequelize.query<ClaimedRow>(`
      UPDATE outbox SET attempts = attempts + 1, next_attempt_at = now() + (:leaseMs * interval '1 millisecond')
      WHERE id IN (
        SELECT id FROM outbox WHERE state = 'queued' AND next_attempt_at <= now()
        ORDER BY id LIMIT 20 FOR UPDATE SKIP LOCKED)
      RETURNING id, to_address, subject, text, html, attempts`, { replacements: { leaseMs }, type: QueryTypes.SELECT })
  }

  async function deliver(row: ClaimedRow): Promise<void> {
    const { OutboxMessage } = db.models
    try {
      await transport.sendMail({ from: options.from, to: row.to_address, subject: row.subject, text: row.text, html: row.html })
      const state: OutboxState = options.local ? 'kept' : 'sent'
      await OutboxMessage.update({ state, sentAt: new Date(), lastError: null }, { where: { id: row.id } })
    } catch (error) {
      const message = (error as Error).message.slice(0, 2000)
      const final = isPermanentFailure(error) || row.attempts >= options.maxAttempts
      log(`message ${row.id} to ${row.to_address}, attempt ${row.attempts}: ${message}${final ? ' (failed)' : ''}`)
      await OutboxMessage.update(final
        ? { state: 'failed', lastError: message }
        : { lastError: message, nextAttemptAt: new Date(Date.now() + retryDelayMs(row.attempts, options.retryBaseMs)) },
      { where: { id: row.id } })
    }
  }

  async function untilNextDue(): Promise<number> {
    const [row] = await db.sequelize.query<{ wait: number | null }>(
      `SELECT EXTRACT(EPOCH FROM (min(next_attempt_at) - now())) * 1000 AS wait FROM outbox WHERE state = 'queued'`,
      { type: QueryTypes.SELECT })
    return row?.wait === null || row?.wait === undefined ? options.pollMs : Math.max(0, Number(row.wait))
  }

  function schedule(ms: number) {
    if (!started) return
    clearTimeout(timer)
    timer = setTimeout(() => { void runOnce() }, Math.min(options.pollMs, Math.max(10, ms)))
    timer.unref?.()
  }

  async function pass(): Promise<void> {
    for (;;) {
      const rows = await claim()
      await Promise.all(rows.map(deliver))
      if (!rows.length) break
    }
  }

  async function runOnce(): Promise<void> {
    if (running) {
      again = true
      return running
    }
    running = (async () => {
      try {
        do {
          again = false
          await pass()
        } while (again)
        schedule(await untilNextDue())
      } catch (error) {
        // Database away: everything stays queued in the table and is tried at the next poll.
        log(`dispatcher: ${(error as Error).message}`)
        schedule(options.pollMs)
      } finally {
        running = undefined
      }
    })()
    return running
  }

  const kick = () => { if (started) void runOnce() }

  return {
    async queue(message, transaction) {
      const row = await db.models.OutboxMessage.create({
        kind: message.kind, toAddress: message.to, subject: message.subject, text: message.text, html: message.html,
      }, { transaction })
      if (transaction) transaction.afterCommit(kick)
      else kick()
      return row
    },
    runOnce,
    async retry(id) {
      const row = await db.models.OutboxMessage.findByPk(id)
      if (!row) return null
      if (row.state === 'failed') {
        await row.update({ state: 'queued', attempts: 0, nextAttemptAt: new Date() })
        kick()
      }
      return row
    },
    start() {
      started = true
      kick()
    },
    async stop() {
      started = false
      clearTimeout(timer)
      await running
    },
  }
}
