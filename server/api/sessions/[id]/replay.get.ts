import { IdParams } from '#shared/schemas/common'
import { ReplayQuery } from '#shared/schemas/session'
import { replaySession } from '../../../live/session-replay'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'viewer')
  const { id } = await parseParams(event, IdParams)
  const { at } = await parseQuery(event, ReplayQuery)
  const { layout } = await loadSession(id)
  return replaySession(useDatabase(), id, layout, at)
})
