import type { LiveUser } from '#shared/live/protocol'

/**
 * The user behind a session, as the live side needs them; null when the account is missing, disabled, or
 * its session version has moved on since the session was sealed.
 */
export async function loadLiveUser(id: number, sessionVersion: number | undefined): Promise<LiveUser | null> {
  const row = await useDatabase().models.User.findByPk(id)
  if (!sessionMatches({ secure: sessionVersion === undefined ? undefined : { sessionVersion } }, row)) return null
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
