import { randomBytes } from 'node:crypto'
import type { JournalEntry } from './journal'

/**
 * An entry ready to be written: numbered in append order, keyed for the unique `events.entry_key`, with its
 * payload already serialised (so a later change to the caller's object cannot alter what is stored).
 */
export interface JournalRecord {
  seq: number
  key: string
  layoutId: number
  sessionId: number | null
  at: number
  type: string
  subject: string | null
  payloadJson: string
  userId: number | null
  /** Owner epoch (several processes), or null. */
  epoch: number | null
}

// Column widths of the events table (migration 0001): longer text would make PostgreSQL refuse the row.
const TYPE_MAX = 48
const SUBJECT_MAX = 64

/**
 * A name for this journal's lifetime: creation time first (so spill files sort oldest first), then the process
 * id (so a leftover file can tell whether its writer is still running), then a random part.
 */
export function newJournalBootId(now = Date.now()): string {
  return `${now.toString(36).padStart(9, '0')}-${process.pid.toString(36)}-${randomBytes(3).toString('hex')}`
}

export function journalEntryKey(bootId: string, seq: number): string {
  return `${bootId}-${seq.toString(36)}`
}

// The instants a row can carry: PostgreSQL reads the time as an ISO string, and JavaScript writes years past
// 9999 in an extended form (+275760-...) that it does not take; times past JavaScript's range cannot be written.
const EARLIEST_AT = Date.parse('0001-01-01T00:00:00.000Z')
const LATEST_AT = Date.parse('9999-12-31T23:59:59.999Z')

/** Why a time cannot be stored, or null when it can. */
export function journalTimeProblem(at: unknown): string | null {
  if (typeof at !== 'number' || !Number.isFinite(at)) return `time ${String(at)} is not a number`
  if (at < EARLIEST_AT || at > LATEST_AT) return `time ${at} is outside the years 1 to 9999`
  return null
}

// PostgreSQL text and jsonb cannot hold the character U+0000; it becomes U+FFFD rather than cost the entry.
// eslint-disable-next-line no-control-regex -- U+0000 is exactly what is looked for
const NUL = /\u0000/g
const NUL_ESCAPE = /(?<!\\)((?:\\\\)*)\\u0000/g // \u0000 in JSON text, not preceded by an escaped backslash

function withoutNul(text: string, what: string, problems: string[]): string {
  if (!text.includes('\u0000')) return text
  problems.push(`${what}: character U+0000 replaced`)
  return text.replace(NUL, '\uFFFD')
}

function serialisePayload(payload: unknown, problems: string[]): string {
  if (payload === undefined || payload === null) return '{}'
  try {
    let json = JSON.stringify(payload)
    // Only objects fit the payload column's meaning; wrap anything else rather than lose it.
    if (json === undefined) return '{}'
    if (!json.startsWith('{')) json = JSON.stringify({ value: payload })
    const cleaned = json.includes('\\u0000') ? json.replace(NUL_ESCAPE, '$1\\ufffd') : json
    if (cleaned !== json) problems.push('payload: character U+0000 replaced')
    return cleaned
  } catch (error) {
    problems.push(`payload could not be serialised (${(error as Error).message})`)
    return JSON.stringify({ unserialisable: String((error as Error).message) })
  }
}

/**
 * Turns an appended entry into a row that PostgreSQL will accept: text cut to its column width, a time
 * that is a real instant, a payload that is JSON. Returns the problems it fixed so they can be logged.
 */
export function prepareJournalEntry(entry: JournalEntry, seq: number, key: string): { stored: JournalRecord, problems: string[] } {
  const problems: string[] = []
  let type = withoutNul(String(entry.type ?? ''), 'type', problems)
  if (type.length > TYPE_MAX) { problems.push(`type cut to ${TYPE_MAX} characters`); type = type.slice(0, TYPE_MAX) }
  let subject = entry.subject == null ? null : withoutNul(String(entry.subject), 'subject', problems)
  if (subject !== null && subject.length > SUBJECT_MAX) { problems.push(`subject cut to ${SUBJECT_MAX} characters`); subject = subject.slice(0, SUBJECT_MAX) }
  let at = Number(entry.at)
  const timeProblem = journalTimeProblem(at)
  if (timeProblem) { problems.push(`${timeProblem}; the append time is used`); at = Date.now() }
  const stored: JournalRecord = {
    seq,
    key,
    layoutId: entry.layoutId,
    sessionId: entry.sessionId ?? null,
    at,
    type,
    subject,
    payloadJson: serialisePayload(entry.payload, problems),
    userId: entry.userId ?? null,
    epoch: typeof entry.epoch === 'number' ? entry.epoch : null,
  }
  return { stored, problems }
}

/** One line of a spill file. The payload is kept as JSON (not a string) so the file stays readable. */
export function toJournalSpillLine(e: JournalRecord): string {
  const head = JSON.stringify({ seq: e.seq, key: e.key, layoutId: e.layoutId, sessionId: e.sessionId, at: e.at, type: e.type, subject: e.subject, userId: e.userId, ...(e.epoch === null ? {} : { epoch: e.epoch }) })
  return `${head.slice(0, -1)},"payload":${e.payloadJson}}\n`
}

/** Reads one spill line back; null when it is not a complete entry (e.g. cut short by a crash). */
export function fromJournalSpillLine(line: string): JournalRecord | null {
  let raw: Record<string, unknown>
  try { raw = JSON.parse(line) } catch { return null }
  if (typeof raw?.key !== 'string' || typeof raw.seq !== 'number' || typeof raw.layoutId !== 'number'
    || typeof raw.at !== 'number' || typeof raw.type !== 'string') return null
  return {
    seq: raw.seq,
    key: raw.key,
    layoutId: raw.layoutId,
    sessionId: typeof raw.sessionId === 'number' ? raw.sessionId : null,
    at: raw.at,
    type: raw.type,
    subject: typeof raw.subject === 'string' ? raw.subject : null,
    payloadJson: JSON.stringify(raw.payload ?? {}),
    userId: typeof raw.userId === 'number' ? raw.userId : null,
    epoch: typeof raw.epoch === 'number' ? raw.epoch : null,
  }
}
