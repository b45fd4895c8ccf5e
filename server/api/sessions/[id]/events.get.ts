import { IdParams } from '#shared/schemas/common'
import { SessionEventsQuery } from '#shared/schemas/session'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'viewer')
  const { id } = await parseParams(event, IdParams)
  const query = await parseQuery(event, SessionEventsQuery)
  const { row, layout } = await loadSession(id)
  return sessionEventsPage(id, layout, query, row.ended_at !== null)
})
