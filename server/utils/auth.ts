import type { H3Event } from 'h3'
import { Op, QueryTypes, type Transaction } from 'sequelize'
import type { User as SessionUser, UserSession } from '#auth-utils'
import { roleAtLeast, type Role } from '#shared/utils/roles'
import type { User } from '../database/models'

export const SESSION_ENDED_MESSAGE = 'Your session has ended (signed out, password changed or access changed). Sign in again.'
// Sessions last 12 hours (runtimeConfig.session.maxAge): an ended one need not be remembered longer.
const SESSION_LIFETIME_MS = 12 * 60 * 60_000

export interface SessionCheck {
  /** The account, when it still exists. */
  row: User | null
  /** Enabled, of the same session version, and this session not signed out. */
  current: boolean
}

/** Reads the account behind a sealed session and says whether the session still stands. */
export async function checkSession(session: Pick<UserSession, 'id' | 'user' | 'secure'>): Promise<SessionCheck> {
  if (!session.user) return { row: null, current: false }
  const { User, EndedSession } = useDatabase().models
  const [row, ended] = await Promise.all([
    User.findByPk(session.user.id),
    session.id ? EndedSession.findByPk(session.id) : null,
  ])
  const current = Boolean(row && !row.disabledAt && !ended && session.id && session.secure?.sessionVersion === row.sessionVersion)
  return { row, current }
}

/**
 * Opens a session for `row`, sealing in its current session version, under a new session id (OWASP ASVS
 * 5.0 7.2.4). h3 would otherwise take the id over from the cookie the request still carries.
 */
export async function openSession(event: H3Event, row: User): Promise<SessionUser> {
  const user: SessionUser = { id: row.id, email: row.email, name: row.name, role: row.role }
  await clearUserSession(event, sessionCookieFor(event))
  const name = useRuntimeConfig(event).session.name ?? 'nuxt-session'
  const cookies = event.node.req.headers.cookie
  if (cookies) event.node.req.headers.cookie = cookies.split(';').filter(c => c.split('=')[0]!.trim() !== name).join(';')
  await setUserSession(event, { user, loggedInAt: Date.now(), secure: { sessionVersion: row.sessionVersion } }, sessionCookieFor(event))
  return user
}

export async function endSession(event: H3Event): Promise<void> {
  await clearUserSession(event, sessionCookieFor(event))
}

/**
 * The one access check every protected route uses. Signed out: 401. Disabled, signed out, or the
 * account's session version raised since signing in: the session is cleared and 401. Role below
 * `needed`: 403. The account is read from the database on every request.
 */
export async function requireRole(event: H3Event, needed: Role): Promise<SessionUser> {
  const session = await getUserSession(event)
  if (!session.user) throw createError({ statusCode: 401, message: 'Sign in to continue.' })
  const { row, current } = await checkSession(session)
  if (!row || !current) {
    await endSession(event)
    const message = row?.disabledAt ? 'This account has been disabled. Ask an admin to enable it again.' : SESSION_ENDED_MESSAGE
    throw createError({ statusCode: 401, message })
  }
  const user: SessionUser = { id: row.id, email: row.email, name: row.name, role: row.role }
  if (user.name !== session.user.name) {
    await replaceUserSession(event, { user, loggedInAt: session.loggedInAt, secure: session.secure }, sessionCookieFor(event))
  }
  if (!roleAtLeast(user.role, needed)) {
    throw createError({ statusCode: 403, message: `This needs the ${needed} role; you are signed in as ${user.role}.` })
  }
  return user
}

/** The role of whoever is signed in with a session that still stands; null for anyone else (never throws 401). */
export async function signedInRole(event: H3Event): Promise<Role | null> {
  const session = await getUserSession(event)
  if (!session.user) return null
  const { row, current } = await checkSession(session)
  return row && current ? row.role : null
}

/** Ends one session (signing out on one device): remembered until it would have expired, its panels closed. */
export async function endOneSession(sessionId: string, userId: number): Promise<void> {
  const { EndedSession } = useDatabase().models
  await EndedSession.destroy({ where: { endedAt: { [Op.lt]: new Date(Date.now() - SESSION_LIFETIME_MS) } } })
  await EndedSession.findOrCreate({ where: { id: sessionId }, defaults: { id: sessionId, userId } })
  runningLive()?.endOneSession(sessionId)
}

/**
 * Ends every session of an account: raises its session version (so every cookie sealed before stops
 * working on the API and the WebSocket) and closes its open WebSockets at once. With `releaseAreas`, the
 * areas of control it holds are released too (a disabled account). Inside a transaction the sockets close
 * once it commits. Returns the new version.
 */
export async function bumpSessionVersion(userId: number, options: { transaction?: Transaction, releaseAreas?: boolean } = {}): Promise<number> {
  const { sequelize } = useDatabase()
  const rows = await sequelize.query<{ session_version: number }>(
    'UPDATE users SET session_version = session_version + 1 WHERE id = :id RETURNING session_version',
    { replacements: { id: userId }, type: QueryTypes.SELECT, transaction: options.transaction })
  const version = rows[0]?.session_version ?? 0
  const endLive = () => runningLive()?.endSessionsOf(userId, version, { releaseAreas: options.releaseAreas ?? false })
  if (options.transaction) options.transaction.afterCommit(endLive)
  else endLive()
  return version
}
