import { IdParams } from '#shared/schemas/common'
import { DeleteSessionBody } from '#shared/schemas/session'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const { confirm } = await parseBody(event, DeleteSessionBody)
  return { deleted: await deleteSession(id, confirm) }
})
