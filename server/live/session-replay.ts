import { createError } from 'h3'
import { QueryTypes } from 'sequelize'
import type { Layout } from '#shared/schemas/layout'
import { createEngine, type Engine, type LayoutState } from '#shared/signalling'
import type { AreaHolders } from '#shared/live/protocol'
import { FOLDED_TYPES, journalEntryToEvent } from '#shared/live/session-fold'
import type { JournalPayload, ReplayState } from '#shared/types/sessions'
import type { Database } from '../database/connection'

/** A checkpoint is stored after this many folded inputs, or this much session time, whichever comes first. */
export const CHECKPOINT_EVERY_EVENTS = 2000
export const CHECKPOINT_EVERY_MS = 120_000
const READ_CHUNK = 5000

export interface CheckpointState { engine: LayoutState, areas: AreaHolders }

interface CheckpointRow { event_id: string, at: Date, events_folded: number, state: CheckpointState }
interface InputRow { id: string, at: Date, type: string, payload: JournalPayload, user_id: number | null }

const foldedTypes = FOLDED_TYPES.map(t => `'${t}'`).join(', ')

/** The state at the start of a session: taken from the live runtime in the same turn the session began. */
export async function saveStartCheckpoint(db: Database, sessionId: number, at: Date, state: CheckpointState): Promise<void> {
  await db.sequelize.query(
    `INSERT INTO session_checkpoints (session_id, event_id, at, events_folded, state) VALUES (:sessionId, 0, :at, 0, :state)
     ON CONFLICT (session_id, event_id) DO NOTHING`,
    { replacements: { sessionId, at, state: JSON.stringify(state) } })
}

function applyRows(engine: Engine, rows: InputRow[]): void {
  for (const row of rows) {
    const event = journalEntryToEvent({ type: row.type, at: row.at.getTime(), payload: row.payload, userId: row.user_id })
    if (event) engine.apply(event)
  }
}

async function latestCheckpoint(db: Database, sessionId: number): Promise<CheckpointRow | null> {
  const [row] = await db.sequelize.query<CheckpointRow>(
    `SELECT event_id, at, events_folded, state FROM session_checkpoints WHERE session_id = :sessionId ORDER BY event_id DESC LIMIT 1`,
    { replacements: { sessionId }, type: QueryTypes.SELECT })
  return row ?? null
}

const building = new Map<number, Promise<number>>()
/** Sessions whose every checkpoint is stored: ended well before their last build began. */
const complete = new Set<number>()
const SETTLED_MS = 10_000

/**
 * Folds the session's inputs after its last checkpoint through the engine, storing a checkpoint every
 * CHECKPOINT_EVERY_EVENTS inputs or CHECKPOINT_EVERY_MS. Entries are stored in the order they were made
 * (one journal writer), so a later entry always has a higher id and what is folded never changes.
 * One build per session at a time; returns the number of checkpoints added.
 */
export function extendCheckpoints(db: Database, sessionId: number, layout: Layout): Promise<number> {
  if (complete.has(sessionId)) return Promise.resolve(0)
  const running = building.get(sessionId)
  if (running) return running
  const work = buildCheckpoints(db, sessionId, layout).finally(() => building.delete(sessionId))
  building.set(sessionId, work)
  return work
}

async function buildCheckpoints(db: Database, sessionId: number, layout: Layout): Promise<number> {
  const [session] = await db.sequelize.query<{ ended_at: Date | null }>(`SELECT ended_at FROM operating_sessions WHERE id = :sessionId`,
    { replacements: { sessionId }, type: QueryTypes.SELECT })
  const settled = !!session?.ended_at && Date.now() - session.ended_at.getTime() > SETTLED_MS
  const added = await foldIntoCheckpoints(db, sessionId, layout)
  if (settled) complete.add(sessionId)
  return added
}

async function foldIntoCheckpoints(db: Database, sessionId: number, layout: Layout): Promise<number> {
  const last = await latestCheckpoint(db, sessionId)
  if (!last) return 0
  const engine = createEngine(layout, last.state.engine)
  const areas = last.state.areas
  let afterId = last.event_id
  let sinceEvents = 0
  let sinceAt = last.at.getTime()
  let folded = last.events_folded
  let added = 0
  for (;;) {
    const rows = await db.sequelize.query<InputRow>(
      `SELECT id, at, type, payload, user_id FROM events WHERE session_id = :sessionId AND id > :afterId AND type IN (${foldedTypes})
       ORDER BY id LIMIT ${READ_CHUNK}`,
      { replacements: { sessionId, afterId }, type: QueryTypes.SELECT })
    for (const row of rows) {
      applyRows(engine, [row])
      sinceEvents++
      folded++
      const at = row.at.getTime()
      if (sinceEvents >= CHECKPOINT_EVERY_EVENTS || at - sinceAt >= CHECKPOINT_EVERY_MS) {
        await db.sequelize.query(
          `INSERT INTO session_checkpoints (session_id, event_id, at, events_folded, state) VALUES (:sessionId, :eventId, :at, :folded, :state)
           ON CONFLICT (session_id, event_id) DO NOTHING`,
          { replacements: { sessionId, eventId: row.id, at: row.at, folded, state: JSON.stringify({ engine: engine.state(), areas }) } })
        added++
        sinceEvents = 0
        sinceAt = at
      }
    }
    if (rows.length < READ_CHUNK) return added
    afterId = rows[rows.length - 1]!.id
  }
}

/**
 * The layout's state at `at` during a session: the nearest checkpoint at or before `at`, then the inputs
 * made after it up to `at` folded through the engine (never more than one checkpoint's spacing).
 */
export async function replaySession(db: Database, sessionId: number, layout: Layout, at: number): Promise<ReplayState> {
  await extendCheckpoints(db, sessionId, layout)
  const when = new Date(at)
  const [start] = await db.sequelize.query<CheckpointRow>(
    `(SELECT event_id, at, events_folded, state FROM session_checkpoints WHERE session_id = :sessionId AND at <= :when ORDER BY event_id DESC LIMIT 1)
     UNION ALL
     (SELECT event_id, at, events_folded, state FROM session_checkpoints WHERE session_id = :sessionId AND event_id = 0)
     LIMIT 1`,
    { replacements: { sessionId, when }, type: QueryTypes.SELECT })
  if (!start) throw createError({ statusCode: 409, message: 'This session has no starting state recorded, so it cannot be replayed.' })
  const [next] = await db.sequelize.query<{ event_id: string }>(
    `SELECT event_id FROM session_checkpoints WHERE session_id = :sessionId AND event_id > :from ORDER BY event_id LIMIT 1`,
    { replacements: { sessionId, from: start.event_id }, type: QueryTypes.SELECT })
  const upTo = next ? ` AND id <= ${BigInt(next.event_id)}` : ''
  const rows = await db.sequelize.query<InputRow>(
    `SELECT id, at, type, payload, user_id FROM events WHERE session_id = :sessionId AND id > :from${upTo} AND type IN (${foldedTypes}) AND at <= :when
     ORDER BY id`,
    { replacements: { sessionId, from: start.event_id, when }, type: QueryTypes.SELECT })
  const engine = createEngine(layout, start.state.engine)
  applyRows(engine, rows)
  const s = engine.state()
  return {
    at,
    state: {
      occupied: s.occupied, turnouts: s.turnouts, overrides: s.overrides, descriptions: s.descriptions, alarms: s.alarms,
      indications: engine.indications(),
    },
  }
}
