import { CreateUserBody } from '#shared/schemas/account'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const body = await parseBody(event, CreateUserBody)
  setResponseStatus(event, 201)
  return { person: await createPerson(body) }
})
