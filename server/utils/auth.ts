import type { H3Event } from 'h3'
import type { User as SessionUser } from '#auth-utils'
import { roleAtLeast, type Role } from '#shared/utils/roles'

/**
 * The one access check every protected route uses. Signed out: 401. Disabled since signing in: the session
 * is cleared and 401. Role below `needed`: 403. The role comes from the database on every request, so a
 * changed role or a disabled account takes effect at once; the session copy is refreshed to match.
 */
export async function requireRole(event: H3Event, needed: Role): Promise<SessionUser> {
  const session = await getUserSession(event)
  if (!session.user) throw createError({ statusCode: 401, message: 'Sign in to continue.' })
  const row = await useDatabase().models.User.findByPk(session.user.id)
  if (!row || row.disabledAt) {
    await clearUserSession(event)
    throw createError({ statusCode: 401, message: 'This account has been disabled. Ask an admin to enable it again.' })
  }
  const user: SessionUser = { id: row.id, email: row.email, name: row.name, role: row.role }
  if (user.role !== session.user.role || user.name !== session.user.name) {
    await replaceUserSession(event, { user, loggedInAt: session.loggedInAt })
  }
  if (!roleAtLeast(user.role, needed)) {
    throw createError({ statusCode: 403, message: `This needs the ${needed} role; you are signed in as ${user.role}.` })
  }
  return user
}
