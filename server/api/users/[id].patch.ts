import { IdParams } from '#shared/schemas/common'
import { UpdateUserBody } from '#shared/schemas/account'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const body = await parseBody(event, UpdateUserBody)
  return { person: await updatePerson(id, body) }
})
