import { IdParams } from '#shared/schemas/common'
import { SessionEventsQuery } from '#shared/schemas/session'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'viewer')
  const { id } = await parseParams(event, IdParams)
  const query = await parseQuery(event, SessionEventsQuery)
  const { layout } = await loadSession(id)
  const stream = await sessionCsvStream(id, layout, query)
  setResponseHeaders(event, {
    'content-type': 'text/csv; charset=utf-8; header=present',
    'content-disposition': `attachment; filename="blockbell-session-${id}.csv"`,
  })
  return sendStream(event, stream)
})
