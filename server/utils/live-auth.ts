import type { UserSession } from '#auth-utils'
import type { LiveUser } from '#shared/live/protocol'

/** The session facts a panel's WebSocket keeps. */
export interface LiveSession { id: string, userId: number, version: number | undefined }

export function liveSessionOf(session: UserSession): LiveSession | null {
  if (!session.user || !session.id) return null
  return { id: session.id, userId: session.user.id, version: session.secure?.sessionVersion }
}

/** The user behind a session, as the live side needs them; null when the session no longer stands. */
export async function loadLiveUser(session: LiveSession): Promise<LiveUser | null> {
  const { row, current } = await checkSession({
    id: session.id,
    user: { id: session.userId } as UserSession['user'],
    secure: session.version === undefined ? undefined : { sessionVersion: session.version },
  })
  if (!row || !current) return null
  runningLive()?.noteSessionVersion(row.id, row.sessionVersion)
  return { id: row.id, name: row.name, role: row.role }
}

/**
 * Cross-site request defence, for the WebSocket handshake (OWASP WebSocket Security Cheat Sheet) and every
 * state-changing request: the Origin must be this server's own, or one listed in BLOCKBELL_ALLOWED_ORIGINS
 * (comma-separated).
 */
export function originAllowed(headers: Headers): boolean {
  const origin = headers.get('origin')
  if (!origin) return false
  const host = headers.get('host')
  const allowed = (process.env.BLOCKBELL_ALLOWED_ORIGINS ?? '').split(',').map(s => s.trim()).filter(Boolean)
  if (allowed.includes(origin)) return true
  try { return new URL(origin).host === host } catch { return false }
}
