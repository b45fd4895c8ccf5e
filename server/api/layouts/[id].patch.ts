import { IdParams } from '#shared/schemas/common'
import { UpdateLayoutBody } from '#shared/schemas/layout-api'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const body = await parseBody(event, UpdateLayoutBody)
  return { layout: await updateLayout(id, body) }
})
