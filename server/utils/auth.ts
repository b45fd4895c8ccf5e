import type { H3Event } from 'h3'
import type { Transaction } from 'sequelize'
import { QueryTypes } from 'sequelize'
import type { User as SessionUser, UserSession } from '#auth-utils'
import { roleAtLeast, type Role } from '#shared/utils/roles'
import type { User } from '../database/models'

export const SESSION_ENDED_MESSAGE = 'Your session has ended (signed out, password changed or access changed). Sign in again.'

/** Whether a sealed session still belongs to the account as it is now: enabled and of the same session version. */
export function sessionMatches(session: Pick<UserSession, 'secure'>, row: User | null): row is User {
  return Boolean(row && !row.disabledAt && session.secure?.sessionVersion === row.sessionVersion)
}

/** Opens a session for `row`, sealing in its current session version. */
export async function openSession(event: H3Event, row: User): Promise<SessionUser> {
  const user: SessionUser = { id: row.id, email: row.email, name: row.name, role: row.role }
  await replaceUserSession(event, { user, loggedInAt: Date.now(), secure: { sessionVersion: row.sessionVersion } }, sessionCookieFor(event))
  return user
}

export async function endSession(event: H3Event): Promise<void> {
  await clearUserSession(event, sessionCookieFor(event))
}

/**
 * The one access check every protected route uses. Signed out: 401. Disabled, or the account's session
 * version raised since signing in (sign-out, password change, role change): the session is cleared and
 * 401. Role below `needed`: 403. The account is read from the database on every request.
 */
export async function requireRole(event: H3Event, needed: Role): Promise<SessionUser> {
  const session = await getUserSession(event)
  if (!session.user) throw createError({ statusCode: 401, message: 'Sign in to continue.' })
  const row = await useDatabase().models.User.findByPk(session.user.id)
  if (row?.disabledAt) {
    await endSession(event)
    throw createError({ statusCode: 401, message: 'This account has been disabled. Ask an admin to enable it again.' })
  }
  if (!sessionMatches(session, row)) {
    await endSession(event)
    throw createError({ statusCode: 401, message: SESSION_ENDED_MESSAGE })
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
