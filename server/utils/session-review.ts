import { LRUCache } from 'lru-cache'
import { Transform, type Readable } from 'node:stream'
import { QueryTypes } from 'sequelize'
import type pg from 'pg'
import QueryStream from 'pg-query-stream'
import { stringify } from 'csv-stringify'
import type { Layout } from '#shared/schemas/layout'
import { namesOf, type LayoutNames } from '#shared/live/feed'
import { describeJournalRow } from '#shared/live/journal-text'
import { areaIntervals, type AreaCommand } from '#shared/live/session-areas'
import { fitGraph, timeDistanceOf, trainMovesOf, type GraphAlarm, type GraphDescriptionEvent, type TrainMove } from '#shared/live/session-graph'
import type { SessionEventsQuery } from '#shared/schemas/session'
import type { GraphData, JournalPayload, SessionEventRow, SessionEventsPage, SessionSummary } from '#shared/types/sessions'
import type { CheckpointState } from '../live/session-replay'

type PgManager = { getConnection(o: object): Promise<pg.PoolClient>, releaseConnection(c: pg.PoolClient): Promise<void> }

interface EventRow { id: string, at: Date, type: string, subject: string | null, payload: JournalPayload, user_id: number | null }

async function peopleNames(): Promise<Map<number, string>> {
  const users = await useDatabase().models.User.findAll({ attributes: ['id', 'name'] })
  return new Map(users.map(u => [u.id, u.name]))
}

function personLookup(people: Map<number, string>) {
  return (id: unknown) => {
    const n = Number(id)
    return Number.isInteger(n) ? people.get(n) ?? null : null
  }
}

const iso = (ms: number) => new Date(ms).toISOString()

export async function sessionSummary(sessionId: number, layout: Layout, startedAt: number, endAt: number): Promise<SessionSummary> {
  const db = useDatabase()
  const q = <T extends object>(sql: string) => db.sequelize.query<T>(sql, { replacements: { sessionId }, type: QueryTypes.SELECT })
  const names = namesOf(layout)
  const people = await peopleNames()
  const person = personLookup(people)

  const [start] = await q<{ state: CheckpointState }>(`SELECT state FROM session_checkpoints WHERE session_id = :sessionId AND event_id = 0`)
  const areaRows = await q<EventRow>(`SELECT id, at, type, subject, payload, user_id FROM events WHERE session_id = :sessionId AND type = 'command'
    AND payload->>'action' IN ('take-area', 'release-area', 'force-release', 'hand-over') ORDER BY id`)
  const commands: AreaCommand[] = areaRows.map(r => ({ at: r.at.getTime(), area: String(r.payload.area), action: String(r.payload.action), userId: r.user_id, to: r.payload.to ?? null }))
  const areas = areaIntervals(start?.state.areas ?? {}, startedAt, commands, endAt).map(i => ({
    area: i.area, areaName: names.area(i.area), person: people.get(i.userId) ?? `person ${i.userId}`,
    from: iso(i.from), to: iso(i.to), seconds: Math.round((i.to - i.from) / 1000),
  }))

  const commandCounts = await q<{ kind: string, user_id: number | null, count: string }>(`SELECT payload->>'action' AS kind, user_id, count(*) AS count
    FROM events WHERE session_id = :sessionId AND type = 'command' GROUP BY 1, 2 ORDER BY 1, 2`)

  // the description entries, from their narrow copy (session_train_steps)
  const steps = await q<{ description: string, moves: string, blocks: string[], first_at: string, last_at: string }>(`
    SELECT description, count(*) FILTER (WHERE reason = 'step') AS moves,
      array_agg(block ORDER BY event_id) AS blocks, min(at_ms) AS first_at, max(at_ms) AS last_at
    FROM session_train_steps WHERE session_id = :sessionId AND reason IS DISTINCT FROM 'spad' AND description IS NOT NULL
    GROUP BY 1 ORDER BY min(at_ms)`)

  const alarms = await q<{ payload: JournalPayload }>(`SELECT payload FROM events WHERE session_id = :sessionId AND type = 'alarm' AND coalesce(payload#>>'{alarm,kind}', 'spad') = 'spad' ORDER BY id`)
  const acks = await q<{ payload: JournalPayload, user_id: number | null }>(`SELECT payload, user_id FROM events WHERE session_id = :sessionId AND type = 'alarm-acknowledged' ORDER BY id`)
  const ackOf = new Map(acks.map(a => [String(a.payload.alarm?.id), a]))
  const dangerPasses = alarms.map(({ payload }) => {
    const a = payload.alarm ?? {}
    const ack = ackOf.get(String(a.id))
    const ackAt = ack?.payload.alarm?.acknowledgedAt ?? null
    return {
      alarm: String(a.id), signal: String(a.signal), block: String(a.block), description: a.description ?? null, at: iso(a.at),
      acknowledgedAt: ackAt === null ? null : iso(ackAt),
      secondsToAcknowledge: ackAt === null ? null : Math.round((ackAt - a.at) / 100) / 10,
      acknowledgedBy: ack ? person(ack.payload.alarm?.acknowledgedBy) ?? person(ack.user_id) : null,
    }
  })

  const dropouts = await q<{ block: string, count: string }>(`SELECT subject AS block, count(*) AS count FROM events
    WHERE session_id = :sessionId AND type = 'dropout' GROUP BY 1 ORDER BY 2 DESC, 1`)
  const speeds = await q<{ at: Date, payload: JournalPayload }>(`SELECT at, payload FROM events WHERE session_id = :sessionId AND type = 'speed' ORDER BY id LIMIT 5000`)
  const [{ count }] = await q<{ count: string }>(`SELECT count(*) FROM events WHERE session_id = :sessionId`) as [{ count: string }]

  return {
    durationSeconds: Math.max(0, Math.round((endAt - startedAt) / 1000)),
    events: Number(count),
    areas,
    commands: commandCounts.map(c => ({ kind: c.kind, person: c.user_id === null ? null : people.get(c.user_id) ?? null, count: Number(c.count) })),
    trains: steps.map(s => ({
      description: s.description, moves: Number(s.moves), blocks: [...new Set(s.blocks)].map(b => names.block(b)),
      firstAt: iso(Number(s.first_at)), lastAt: iso(Number(s.last_at)),
    })),
    dangerPasses,
    dropouts: dropouts.map(d => ({ block: d.block, blockName: names.block(d.block), count: Number(d.count) })),
    speeds: speeds.map(({ at, payload: p }) => ({
      description: p.description, block: p.block, blockName: names.block(p.block), at: at.toISOString(),
      lengthMm: p.lengthMm, seconds: p.seconds, kmh: p.kmh, mph: p.mph,
    })),
    scale: { name: layout.scale.name, ratio: layout.scale.ratio },
  }
}

// ---- the event log ----

interface Cursor { order: 'asc' | 'desc', id: string }

export function encodeEventCursor(c: Cursor): string {
  return Buffer.from(`${c.order}:${c.id}`).toString('base64url')
}

function decodeEventCursor(text: string, order: 'asc' | 'desc'): Cursor {
  const m = /^(asc|desc):(\d{1,19})$/.exec(Buffer.from(text, 'base64url').toString())
  if (!m) throw createError({ statusCode: 400, message: 'after: not a cursor from a previous page', data: { issues: [{ path: 'after', message: 'not a cursor from a previous page' }] } })
  if (m[1] !== order) throw createError({ statusCode: 400, message: 'after: this cursor belongs to the other sort order', data: { issues: [{ path: 'after', message: 'belongs to the other sort order' }] } })
  return { order, id: m[2]! }
}

const badFilter = (path: string, message: string) =>
  createError({ statusCode: 400, message: `${path}: ${message}`, data: { issues: [{ path, message }] } })

/** SQL conditions of the log's filters (shared by the page and the CSV export). */
function eventFilters(layout: Layout, q: Omit<SessionEventsQuery, 'limit' | 'after' | 'order'>) {
  const where = ['session_id = :sessionId']
  const replacements: Record<string, unknown> = {}
  if (q.kind) { where.push('type = :kind'); replacements.kind = q.kind }
  if (q.block) {
    const block = layout.blocks.find(b => b.id === q.block)
    if (!block) throw badFilter('block', `there is no block "${q.block}" on this layout`)
    where.push('subject IN (:blockSubjects)')
    replacements.blockSubjects = [block.id, ...block.detectors]
  }
  if (q.signal) {
    if (!layout.signals.some(s => s.id === q.signal)) throw badFilter('signal', `there is no signal "${q.signal}" on this layout`)
    where.push('subject = :signal'); replacements.signal = q.signal
  }
  if (q.description) { where.push(`COALESCE(payload->>'description', payload#>>'{alarm,description}') = :description`); replacements.description = q.description }
  if (q.user) { where.push('user_id = :user'); replacements.user = q.user }
  if (q.from !== undefined) { where.push('at >= :from'); replacements.from = new Date(q.from) }
  if (q.to !== undefined) { where.push('at <= :to'); replacements.to = new Date(q.to) }
  return { where, replacements }
}

/** The log names signals and blocks by id (what its filters take); areas by name. */
function logNames(layout: Layout): LayoutNames {
  const names = namesOf(layout)
  return { block: id => id, signal: id => id, area: names.area }
}

function toEventRow(names: LayoutNames, people: Map<number, string>, r: EventRow): SessionEventRow {
  const who = r.user_id === null ? null : people.get(r.user_id) ?? null
  return {
    id: String(r.id), at: r.at.toISOString(), kind: r.type, subject: r.subject, person: who,
    text: describeJournalRow(names, { type: r.type, subject: r.subject, payload: r.payload, person: who }, personLookup(people)),
  }
}

/**
 * One page of a session's log: keyset on the event id (no OFFSET), so a page is as fast at the end as at the start.
 * The ids are also bounded to the session's own (its first and, once ended, its last entry): walking the journal's
 * primary key for a filter the planner finds common, it then never wades through the entries of other sessions.
 */
export async function sessionEventsPage(sessionId: number, layout: Layout, q: SessionEventsQuery, ended: boolean): Promise<SessionEventsPage> {
  const { where, replacements } = eventFilters(layout, q)
  const [range] = await useDatabase().sequelize.query<{ lo: string | null, hi: string | null }>(
    `SELECT min(id) AS lo, max(id) AS hi FROM events WHERE session_id = :sessionId`, { replacements: { sessionId }, type: QueryTypes.SELECT })
  if (!range?.lo) return { rows: [], next: null }
  where.push('id >= :firstId')
  replacements.firstId = range.lo
  if (ended) {
    where.push('id <= :lastId')
    replacements.lastId = range.hi
  }
  if (q.after) {
    const cursor = decodeEventCursor(q.after, q.order)
    where.push(q.order === 'asc' ? 'id > :afterId' : 'id < :afterId')
    replacements.afterId = cursor.id
  }
  const rows = await useDatabase().sequelize.query<EventRow>(
    `SELECT id, at, type, subject, payload, user_id FROM events WHERE ${where.join(' AND ')} ORDER BY id ${q.order === 'asc' ? 'ASC' : 'DESC'} LIMIT :limit`,
    { replacements: { ...replacements, sessionId, limit: q.limit + 1 }, type: QueryTypes.SELECT })
  const more = rows.length > q.limit
  const page = rows.slice(0, q.limit)
  const names = logNames(layout)
  const people = await peopleNames()
  return {
    rows: page.map(r => toEventRow(names, people, r)),
    next: more ? encodeEventCursor({ order: q.order, id: String(page[page.length - 1]!.id) }) : null,
  }
}

export const CSV_COLUMNS = ['id', 'time', 'kind', 'subject', 'person', 'text', 'payload'] as const

/**
 * The filtered log as CSV (RFC 4180: CRLF line ends, fields with commas, quotes or line breaks quoted, quotes
 * doubled), read through a database cursor a batch at a time: memory stays flat whatever the log's length.
 */
export async function sessionCsvStream(sessionId: number, layout: Layout, q: Omit<SessionEventsQuery, 'limit' | 'after' | 'order'>): Promise<Readable> {
  const { where, replacements } = eventFilters(layout, q)
  const names = logNames(layout)
  const people = await peopleNames()
  // pg-query-stream takes $n parameters: turn the named ones into them.
  const values: unknown[] = []
  const sql = `SELECT id, at, type, subject, payload, user_id FROM events WHERE ${where.join(' AND ')} ORDER BY id`
    .replace(/:(\w+)/g, (_m, name: string) => {
      const v = name === 'sessionId' ? sessionId : replacements[name]
      if (Array.isArray(v)) return v.map((x) => { values.push(x); return `$${values.length}` }).join(', ')
      values.push(v)
      return `$${values.length}`
    })
  const manager = useDatabase().sequelize.connectionManager as unknown as PgManager
  const client = await manager.getConnection({ type: 'read' })
  let released = false
  const release = () => {
    if (released) return
    released = true
    void manager.releaseConnection(client)
  }
  const rows: Readable = client.query(new QueryStream(sql, values, { batchSize: 500, highWaterMark: 500 }))
  const toRecord = new Transform({
    objectMode: true,
    transform(r: EventRow, _enc, done) {
      const row = toEventRow(names, people, r)
      done(null, [row.id, row.at, row.kind, row.subject ?? '', row.person ?? '', row.text, JSON.stringify(r.payload)])
    },
  })
  const csv = stringify({ header: true, columns: [...CSV_COLUMNS], record_delimiter: 'windows' })
  rows.on('end', release).on('error', (e) => { release(); csv.destroy(e) }).on('close', release)
  csv.on('close', () => { if (!rows.destroyed) rows.destroy(); release() })
  return rows.pipe(toRecord).pipe(csv)
}

// ---- the time-distance graph ----

/** Rows as arrays, straight from pg: a long night's graph reads a hundred thousand of them. */
async function selectArrays(sql: string, values: unknown[]): Promise<unknown[][]> {
  const manager = useDatabase().sequelize.connectionManager as unknown as PgManager
  const client = await manager.getConnection({ type: 'read' })
  try {
    return (await client.query({ text: sql, values, rowMode: 'array' })).rows as unknown[][]
  } finally {
    await manager.releaseConnection(client)
  }
}

export interface GraphWindow { from?: number, to?: number, width: number }

type StepRow = [at: string, block: string, description: string | null, reason: string | null, signal: string | null]

function splitSteps(rows: StepRow[]): { steps: GraphDescriptionEvent[], alarms: GraphAlarm[] } {
  const steps: GraphDescriptionEvent[] = []
  const alarms: GraphAlarm[] = []
  for (const [at, block, description, reason, signal] of rows) {
    if (reason === 'spad') alarms.push({ at: Number(at), block, signal: signal ?? '', description })
    else steps.push({ at: Number(at), block, description, reason: reason ?? '' })
  }
  return { steps, alarms }
}

/** A journal batch of a session can still arrive this long after it ends (as for its checkpoints). */
const GRAPH_SETTLED_MS = 15_000
const storingGraph = new Map<number, Promise<void>>()

/** Stores an ended session's train moves and signals passed at danger (session_graph_data), once. */
export function storeSessionGraph(sessionId: number): Promise<void> {
  const running = storingGraph.get(sessionId)
  if (running) return running
  const work = (async () => {
    const rows = await selectArrays(
      `SELECT at_ms, block, description, reason, signal, event_id FROM session_train_steps WHERE session_id = $1 ORDER BY event_id`, [sessionId])
    const { steps, alarms } = splitSteps(rows as StepRow[])
    const through = rows.length ? String(rows[rows.length - 1]![5]) : '0'
    await useDatabase().sequelize.query(
      `INSERT INTO session_graph_data (session_id, through_event_id, trains, danger_passes)
       SELECT id, :through, :trains, :alarms FROM operating_sessions WHERE id = :sessionId AND ended_at IS NOT NULL
       ON CONFLICT (session_id) DO NOTHING`,
      { replacements: { sessionId, through, trains: JSON.stringify([...trainMovesOf(steps)]), alarms: JSON.stringify(alarms) } })
  })().finally(() => storingGraph.delete(sessionId))
  storingGraph.set(sessionId, work)
  return work
}

const settled = (endedAt: number | null): endedAt is number => endedAt !== null && Date.now() - endedAt > GRAPH_SETTLED_MS

/** The session's train moves: stored once it has settled after its end, else from its steps as they stand. */
async function sessionTrainMoves(sessionId: number, routeIds: string[], endedAt: number | null): Promise<{ trains: [string, TrainMove[]][], alarms: GraphAlarm[] }> {
  if (settled(endedAt)) {
    const read = () => selectArrays(`SELECT trains, danger_passes FROM session_graph_data WHERE session_id = $1`, [sessionId])
    let stored = await read()
    if (!stored.length) {
      await storeSessionGraph(sessionId)
      stored = await read()
    }
    if (stored.length) return { trains: stored[0]![0] as [string, TrainMove[]][], alarms: stored[0]![1] as GraphAlarm[] }
  }
  const rows = await selectArrays(
    `SELECT at_ms, block, description, reason, signal FROM session_train_steps WHERE session_id = $1 AND block = ANY($2::text[]) ORDER BY event_id`,
    [sessionId, routeIds])
  const { steps, alarms } = splitSteps(rows as StepRow[])
  return { trains: [...trainMovesOf(steps)], alarms }
}

/**
 * The time-distance graph of a route, from the session's train moves, drawn over the whole session or the window
 * asked for, and thinned to what `width` pixels can show.
 */
export async function sessionGraph(sessionId: number, layout: Layout, routeIds: string[], startedAt: number, endedAt: number | null, view: GraphWindow): Promise<GraphData> {
  const byId = new Map(layout.blocks.map(b => [b.id, b]))
  const unknown = routeIds.filter(id => !byId.has(id))
  if (unknown.length) throw badFilter('route', `no block ${unknown.map(u => `"${u}"`).join(', ')} on this layout`)
  if (new Set(routeIds).size !== routeIds.length) throw badFilter('route', 'a block appears twice')
  const endAt = endedAt ?? Date.now()
  const from = Math.max(startedAt, view.from ?? startedAt)
  const to = Math.min(endAt, view.to ?? endAt)
  if (from >= to) throw badFilter('from', 'the span asked for lies outside the session')
  const route = routeIds.map(id => ({ id, name: byId.get(id)!.name, lengthMm: byId.get(id)!.lengthMm }))
  const whole = async () => {
    const { trains, alarms } = await sessionTrainMoves(sessionId, routeIds, endedAt)
    return timeDistanceOf(route, trains, alarms, startedAt, endAt)
  }
  if (!settled(endedAt)) return fitGraph(await whole(), from, to, view.width)
  const key = `${sessionId}:${from}:${to}:${view.width}:${routeIds.join(',')}`
  const drawn = fittedGraphs.get(key)
  if (drawn) return drawn
  const routeKey = `${sessionId}:${routeIds.join(',')}`
  const graph = settledGraphs.get(routeKey) ?? await whole()
  settledGraphs.set(routeKey, graph)
  const fitted = fitGraph(graph, from, to, view.width)
  fittedGraphs.set(key, fitted)
  return fitted
}

const pointsOf = (graph: GraphData) => Math.max(1, graph.trains.reduce((n, t) => n + t.points.length, 0))

/**
 * Graphs of ended, settled sessions, kept in memory by route (whole) and by view (drawn): such a session's
 * moves never change, so a second look, a zoom or another viewer skips the database and the fold. Bounded by
 * the points held (about 40 bytes each), evicting the least recently used.
 */
const settledGraphs = new LRUCache<string, GraphData>({ maxSize: 2_000_000, sizeCalculation: pointsOf })
const fittedGraphs = new LRUCache<string, GraphData>({ maxSize: 500_000, sizeCalculation: pointsOf })

/** Forgets a session's graphs (its log was deleted). */
export function forgetSessionGraphs(sessionId: number): void {
  for (const cache of [settledGraphs, fittedGraphs]) {
    for (const key of [...cache.keys()]) if (key.startsWith(`${sessionId}:`)) cache.delete(key)
  }
}
