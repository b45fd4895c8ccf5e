import { IdParams } from '#shared/schemas/common'
import { GraphQuery } from '#shared/schemas/session'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'viewer')
  const { id } = await parseParams(event, IdParams)
  const { route, from, to, width } = await parseQuery(event, GraphQuery)
  const { row, layout } = await loadSession(id)
  return sessionGraph(id, layout, route, row.started_at.getTime(), row.ended_at?.getTime() ?? null, { from, to, width })
})
