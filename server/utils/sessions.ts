import { QueryTypes, UniqueConstraintError } from 'sequelize'
import type { User as SessionUser } from '#auth-utils'
import { validateLayout } from '#shared/signalling'
import type { Layout } from '#shared/schemas/layout'
import type { ListSessionsQuery, StartSessionBody } from '#shared/schemas/session'
import type { SessionDetail, SessionListItem } from '#shared/types/sessions'
import { toLiveSession } from '../live/session-live'
import { extendCheckpoints, saveStartCheckpoint } from '../live/session-replay'
import { useLive } from './live'

interface SessionRow {
  id: number
  name: string
  started_at: Date
  ended_at: Date | null
  fast_clock_ratio: number
  fast_clock_start: string | null
  notes: string | null
  layout_id: number
  layout_version: number | null
  slug: string
  layout_name: string
  started_by: string | null
  ended_by: string | null
  train_moves: string
  spads: string
  dropouts: string
  operators: string[] | null
}

const SESSION_FIELDS = `s.id, s.name, s.started_at, s.ended_at, s.fast_clock_ratio, s.fast_clock_start, s.notes, s.layout_id, s.layout_version,
    l.slug, l.name AS layout_name, su.name AS started_by, eu.name AS ended_by`
const SESSION_FROM = `FROM operating_sessions s JOIN layouts l ON l.id = s.layout_id
  LEFT JOIN users su ON su.id = s.started_by LEFT JOIN users eu ON eu.id = s.ended_by`
// The list's figures are counted from the session's own events (partial indexes on session_id and type) and
// their narrow copy of train steps and signals passed at danger.
const SESSION_COUNTS = `
    (SELECT count(*) FROM session_train_steps t WHERE t.session_id = s.id AND t.reason = 'step') AS train_moves,
    (SELECT count(*) FROM session_train_steps t WHERE t.session_id = s.id AND t.reason = 'spad') AS spads,
    (SELECT count(*) FROM events e WHERE e.session_id = s.id AND e.type = 'dropout') AS dropouts,
    (SELECT array_agg(DISTINCT u.name ORDER BY u.name) FROM events e JOIN users u ON u.id = e.user_id
      WHERE e.session_id = s.id AND e.type = 'command') AS operators`
const SESSION_SELECT = `SELECT ${SESSION_FIELDS}, ${SESSION_COUNTS} ${SESSION_FROM}`
const SESSION_SELECT_LIGHT = `SELECT ${SESSION_FIELDS}, '0' AS train_moves, '0' AS spads, '0' AS dropouts, NULL AS operators ${SESSION_FROM}`

function toListItem(row: SessionRow, now = Date.now()): SessionListItem {
  const end = row.ended_at ? row.ended_at.getTime() : now
  return {
    id: row.id, layout: { slug: row.slug, name: row.layout_name }, name: row.name,
    startedAt: row.started_at.toISOString(), endedAt: row.ended_at?.toISOString() ?? null,
    durationSeconds: Math.max(0, Math.round((end - row.started_at.getTime()) / 1000)),
    fastClockRatio: Number(row.fast_clock_ratio), fastClockStart: row.fast_clock_start,
    startedBy: row.started_by, operators: row.operators ?? [],
    trainMoves: Number(row.train_moves), signalsPassedAtDanger: Number(row.spads), dropouts: Number(row.dropouts),
  }
}

/** Work a layout's owner does when the request reached another process (registered by the live plugin). */
export const SESSION_START_WORK = 'session-start'
export const SESSION_END_WORK = 'session-end'

/**
 * Starts a session on a layout; 409 when one is already running there (the database decides between two
 * starts). Several processes: the process that runs the layout does it, wherever the request landed.
 */
export async function startOperatingSession(user: SessionUser, body: StartSessionBody): Promise<{ id: number }> {
  const db = useDatabase()
  const layout = await db.models.Layout.findOne({ where: { slug: body.layout } })
  if (!layout) throw createError({ statusCode: 404, message: `layout: there is no layout "${body.layout}"` })
  const live = useLive()
  await live.whenReady()
  if (live.runsElsewhere(body.layout)) {
    return atLayoutOwner(body.layout, SESSION_START_WORK, { user, body }, 'The session may or may not have started: look at the list of sessions before you try again.')
  }
  return startSessionHere(user, body)
}

/** Starts a session on a layout this process runs (or the only process). */
export async function startSessionHere(user: SessionUser, body: StartSessionBody): Promise<{ id: number }> {
  const db = useDatabase()
  const layout = await db.models.Layout.findOne({ where: { slug: body.layout } })
  if (!layout) throw createError({ statusCode: 404, message: `layout: there is no layout "${body.layout}"` })
  const live = useLive()
  const runtime = live.runtime(body.layout)
  if (!runtime) throw createError({ statusCode: 409, message: `layout: ${layout.name} is not running live (its definition has errors), so a session cannot start on it.` })
  let row
  try {
    row = await db.models.OperatingSession.create({
      layoutId: layout.id, layoutVersion: layout.version, name: body.name, startedAt: new Date(), startedBy: user.id,
      fastClockRatio: body.fastClockRatio, fastClockStart: body.fastClockStart ?? null, notes: body.notes || null,
    })
  } catch (error) {
    if (!(error instanceof UniqueConstraintError)) throw error
    const running = await db.models.OperatingSession.findOne({ where: { layoutId: layout.id, endedAt: null } })
    throw createError({
      statusCode: 409,
      message: `A session is already running on ${layout.name}${running ? `: “${running.name}”, started ${running.startedAt.toISOString()}` : ''}. End it first.`,
      data: { running: running?.id ?? null },
    })
  }
  // Same turn as the session begins: the start state and the first entry that carries the session agree.
  const start = { engine: structuredClone(runtime.state()), areas: structuredClone(runtime.areaHolders()) }
  runtime.setSession(toLiveSession(row), user.id)
  await saveStartCheckpoint(db, row.id, row.startedAt, start)
  return { id: row.id }
}

/** Ends a running session. Several processes: the process that runs its layout does it. */
export async function endOperatingSession(user: SessionUser, id: number): Promise<{ id: number, endedAt: string }> {
  const db = useDatabase()
  const live = useLive()
  await live.whenReady()
  const [where] = await db.sequelize.query<{ slug: string }>('SELECT l.slug FROM operating_sessions s JOIN layouts l ON l.id = s.layout_id WHERE s.id = :id',
    { replacements: { id }, type: QueryTypes.SELECT })
  if (where && live.runsElsewhere(where.slug)) {
    return atLayoutOwner(where.slug, SESSION_END_WORK, { user, id }, 'The session may or may not have ended: look at the list of sessions before you try again.')
  }
  return endSessionHere(user, id)
}

/** Ends a session whose layout this process runs (or does not run at all). */
export async function endSessionHere(user: SessionUser, id: number): Promise<{ id: number, endedAt: string }> {
  const db = useDatabase()
  const [rows] = await db.sequelize.query(
    `UPDATE operating_sessions SET ended_at = now(), ended_by = :userId WHERE id = :id AND ended_at IS NULL RETURNING layout_id, ended_at`,
    { replacements: { id, userId: user.id } }) as [{ layout_id: number, ended_at: Date }[], unknown]
  const ended = rows[0]
  if (!ended) {
    const exists = await db.models.OperatingSession.findByPk(id)
    if (!exists) throw createError({ statusCode: 404, message: `id: no session with id ${id}` })
    throw createError({ statusCode: 409, message: `Session “${exists.name}” has already ended.` })
  }
  const layout = await db.models.Layout.findByPk(ended.layout_id)
  const runtime = layout ? useLive().runtime(layout.slug) : undefined
  if (runtime?.currentSession()?.id === id) runtime.setSession(null, user.id)
  if (runtime) {
    // Checkpoints for the whole session now, so the first replay seek does not fold the night.
    void extendCheckpoints(db, id, runtime.layout).catch(error => console.warn(`[blockbell] checkpoints of session ${id}: ${(error as Error).message}`))
  }
  // the graph's train moves once the journal's last batches of the session are in
  setTimeout(() => void storeSessionGraph(id).catch(error => console.warn(`[blockbell] graph data of session ${id}: ${(error as Error).message}`)), 20_000).unref()
  try { onSessionEnded(id) } catch (error) { console.warn(`[blockbell] after session ${id} ended: ${(error as Error).message}`) }
  return { id, endedAt: new Date(ended.ended_at).toISOString() }
}

export async function listSessions(q: ListSessionsQuery): Promise<{ sessions: SessionListItem[], total: number, page: number, pages: number }> {
  const where: string[] = []
  const replacements: Record<string, unknown> = { limit: q.limit, offset: (q.page - 1) * q.limit }
  if (q.layout) { where.push('l.slug = :layout'); replacements.layout = q.layout }
  if (q.from !== undefined) { where.push('s.started_at >= :from'); replacements.from = new Date(q.from) }
  if (q.to !== undefined) { where.push('s.started_at <= :to'); replacements.to = new Date(q.to) }
  const filter = where.length ? `WHERE ${where.join(' AND ')}` : ''
  const db = useDatabase()
  const rows = await db.sequelize.query<SessionRow>(`${SESSION_SELECT} ${filter} ORDER BY s.started_at DESC, s.id DESC LIMIT :limit OFFSET :offset`,
    { replacements, type: QueryTypes.SELECT })
  const [{ count }] = await db.sequelize.query<{ count: string }>(
    `SELECT count(*) ${SESSION_FROM} ${filter}`, { replacements, type: QueryTypes.SELECT }) as [{ count: string }]
  const total = Number(count)
  return { sessions: rows.map(r => toListItem(r)), total, page: q.page, pages: Math.max(1, Math.ceil(total / q.limit)) }
}

export interface LoadedSession {
  row: SessionRow
  layout: Layout
  /** The version drawn: the one the session ran on, or the current one when that was not recorded. */
  version: number
  versionRecorded: boolean
}

// Checked definitions by layout and version: a stored version never changes, and every review request needs one.
const checkedVersions = new Map<string, Layout>()
const CHECKED_VERSIONS_KEPT = 32

async function layoutAtVersion(layoutId: number, version: number | null): Promise<{ layout: Layout, version: number }> {
  const db = useDatabase()
  let wanted = version
  if (wanted === null) {
    const current = await db.models.Layout.findByPk(layoutId, { attributes: ['version'] })
    wanted = current?.version ?? 1
  }
  const key = `${layoutId}:${wanted}`
  const cached = checkedVersions.get(key)
  if (cached) return { layout: cached, version: wanted }
  const stored = await db.models.LayoutVersion.findOne({ where: { layoutId, version: wanted }, attributes: ['definition'] })
  // A layout made before versions were kept has only its current definition.
  const definition = stored ? stored.definition : (await db.models.Layout.findByPk(layoutId, { attributes: ['definition'] }))?.definition
  const checked = validateLayout(definition)
  if (!checked.ok) throw createError({ statusCode: 409, message: `Version ${wanted} of this session's layout has errors in its definition; it cannot be reviewed.` })
  if (checkedVersions.size >= CHECKED_VERSIONS_KEPT) checkedVersions.delete(checkedVersions.keys().next().value!)
  checkedVersions.set(key, checked.layout)
  return { layout: checked.layout, version: wanted }
}

/**
 * A session with the layout definition it ran on (404 when there is none): replay, log, graph and summary all
 * read the session's own version, whatever the layout became afterwards. The list's figures only when asked for.
 */
export async function loadSession(id: number, withCounts = false): Promise<LoadedSession> {
  const db = useDatabase()
  const [row] = await db.sequelize.query<SessionRow>(`${withCounts ? SESSION_SELECT : SESSION_SELECT_LIGHT} WHERE s.id = :id`, { replacements: { id }, type: QueryTypes.SELECT })
  if (!row) throw createError({ statusCode: 404, message: `id: no session with id ${id}` })
  const { layout, version } = await layoutAtVersion(row.layout_id, row.layout_version)
  return { row, layout, version, versionRecorded: row.layout_version !== null }
}

export async function getSessionReview(id: number): Promise<SessionDetail> {
  const { row, layout, version, versionRecorded } = await loadSession(id, true)
  return {
    ...toListItem(row),
    layoutVersion: version, layoutVersionRecorded: versionRecorded, definition: layout,
    notes: row.notes, endedBy: row.ended_by, running: row.ended_at === null,
    blocks: layout.blocks.map(b => ({ id: b.id, name: b.name, lengthMm: b.lengthMm })),
    summary: await sessionSummary(row.id, layout, row.started_at.getTime(), row.ended_at?.getTime() ?? Date.now()),
  }
}

/** Deletes a session's log: its events, its checkpoints and the session itself. Admin only; never a running one. */
export async function deleteSession(id: number, confirm: string): Promise<{ id: number, events: number, checkpoints: number }> {
  const db = useDatabase()
  const session = await db.models.OperatingSession.findByPk(id)
  if (!session) throw createError({ statusCode: 404, message: `id: no session with id ${id}` })
  if (!session.endedAt) throw createError({ statusCode: 409, message: `Session “${session.name}” is still running; end it before deleting its log.` })
  if (confirm !== session.name) throw createError({ statusCode: 400, message: `confirm: type the session's name, “${session.name}”, to delete it`, data: { issues: [{ path: 'confirm', message: 'does not match the session name' }] } })
  const deleted = await db.sequelize.transaction(async (transaction) => {
    const count = async (sql: string) => {
      const [row] = await db.sequelize.query<{ n: string }>(`WITH gone AS (${sql} RETURNING 1) SELECT count(*) AS n FROM gone`,
        { replacements: { id }, transaction, type: QueryTypes.SELECT })
      return Number(row!.n)
    }
    const events = await count('DELETE FROM events WHERE session_id = :id')
    const checkpoints = await count('DELETE FROM session_checkpoints WHERE session_id = :id')
    await db.sequelize.query(`DELETE FROM operating_sessions WHERE id = :id`, { replacements: { id }, transaction })
    return { id, events, checkpoints }
  })
  forgetSessionGraphs(id)
  return deleted
}

/** What a delete would remove, for the confirmation. */
export async function sessionDeletePreview(id: number): Promise<{ name: string, events: number, checkpoints: number }> {
  const db = useDatabase()
  const session = await db.models.OperatingSession.findByPk(id)
  if (!session) throw createError({ statusCode: 404, message: `id: no session with id ${id}` })
  const [row] = await db.sequelize.query<{ events: string, checkpoints: string }>(
    `SELECT (SELECT count(*) FROM events WHERE session_id = :id) AS events, (SELECT count(*) FROM session_checkpoints WHERE session_id = :id) AS checkpoints`,
    { replacements: { id }, type: QueryTypes.SELECT })
  return { name: session.name, events: Number(row!.events), checkpoints: Number(row!.checkpoints) }
}
