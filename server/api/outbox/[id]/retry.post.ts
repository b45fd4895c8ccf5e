import { IdParams } from '#shared/schemas/common'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const message = await retryOutboxMessage(id)
  if (!message) throw createError({ statusCode: 404, message: `id: no message with id ${id}` })
  return { message }
})
