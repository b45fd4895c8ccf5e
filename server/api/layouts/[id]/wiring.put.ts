import { IdParams } from '#shared/schemas/common'
import { AssignWiringBody } from '#shared/schemas/layout-api'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const body = await parseBody(event, AssignWiringBody)
  return { item: await assignWiring(id, body) }
})
