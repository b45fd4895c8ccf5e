import { ListSessionsQuery } from '#shared/schemas/session'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'viewer')
  return listSessions(await parseQuery(event, ListSessionsQuery))
})
