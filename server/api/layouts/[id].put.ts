import { IdParams } from '#shared/schemas/common'
import { SaveLayoutBody } from '#shared/schemas/layout-api'

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const body = await parseBody(event, SaveLayoutBody)
  return await saveLayout(id, body, user.id)
})
