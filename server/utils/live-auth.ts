import type { LiveUser } from '#shared/live/protocol'

/** The user behind a session user id, as the live side needs them; null when missing or disabled. */
export async function loadLiveUser(id: number): Promise<LiveUser | null> {
  const row = await useDatabase().models.User.findByPk(id)
  if (!row || row.disabledAt) return null
  return { id: row.id, name: row.name, role: row.role }
}

/**
 * Cross-site WebSocket hijacking defence (OWASP WebSocket Security Cheat Sheet): the Origin must be this
 * server's own, or one listed in BLOCKBELL_ALLOWED_ORIGINS (comma-separated).
 */
export function originAllowed(headers: Headers): boolean {
  const origin = headers.get('origin')
  if (!origin) return false
  const host = headers.get('host')
  const allowed = (process.env.BLOCKBELL_ALLOWED_ORIGINS ?? '').split(',').map(s => s.trim()).filter(Boolean)
  if (allowed.includes(origin)) return true
  try { return new URL(origin).host === host } catch { return false }
}
