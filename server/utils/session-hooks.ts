import { QueryTypes } from 'sequelize'
import { validateLayout } from '#shared/signalling'

/**
 * Called once when an operating session ends (after it is stored as ended): each person who operated in it
 * gets its summary by e-mail. Runs in the background; a failure is logged, never thrown into the caller.
 */
export function onSessionEnded(sessionId: number): void {
  void mailSessionSummary(sessionId).catch(error => console.warn(`[blockbell] summary mail of session ${sessionId}: ${(error as Error).message}`))
}

async function mailSessionSummary(sessionId: number): Promise<void> {
  const db = useDatabase()
  const session = await db.models.OperatingSession.findByPk(sessionId)
  if (!session?.endedAt) return
  const layoutRow = await db.models.Layout.findByPk(session.layoutId)
  const checked = layoutRow ? validateLayout(layoutRow.definition) : null
  if (!layoutRow || !checked?.ok) return
  const summary = await sessionSummary(sessionId, checked.layout, session.startedAt.getTime(), session.endedAt.getTime())
  // the operators: everyone who made a command during the session, and who started and ended it
  const operators = await db.sequelize.query<{ email: string, name: string }>(`
    SELECT u.email, u.name FROM users u
    WHERE u.disabled_at IS NULL AND (u.id IN (SELECT DISTINCT user_id FROM events WHERE session_id = :sessionId AND type = 'command' AND user_id IS NOT NULL)
      OR u.id = :startedBy OR u.id = :endedBy)
    ORDER BY u.name`, { replacements: { sessionId, startedBy: session.startedBy ?? -1, endedBy: session.endedBy ?? -1 }, type: QueryTypes.SELECT })
  if (!operators.length) return
  await sendSessionSummary({
    sessionId, sessionName: session.name, layoutName: layoutRow.name, startedAt: session.startedAt, endedAt: session.endedAt,
    trains: summary.trains.length, signalsPassedAtDanger: summary.dangerPasses.length,
    dropouts: summary.dropouts.reduce((n, d) => n + d.count, 0),
  }, operators)
}
