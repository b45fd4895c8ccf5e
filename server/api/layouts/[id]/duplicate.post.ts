import { IdParams } from '#shared/schemas/common'
import { DuplicateLayoutBody } from '#shared/schemas/layout-api'

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const { name } = await parseBody(event, DuplicateLayoutBody)
  setResponseStatus(event, 201)
  return await duplicateLayout(id, name, user.id)
})
