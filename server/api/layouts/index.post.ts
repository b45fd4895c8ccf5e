import { CreateLayoutBody } from '#shared/schemas/layout-api'

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'admin')
  const body = await parseBody(event, CreateLayoutBody)
  setResponseStatus(event, 201)
  return await createLayout(body, user.id)
})
