import { IdParams } from '#shared/schemas/common'

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'signaller')
  const { id } = await parseParams(event, IdParams)
  return endOperatingSession(user, id)
})
