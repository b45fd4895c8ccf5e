import { StartSessionBody } from '#shared/schemas/session'

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'signaller')
  const body = await parseBody(event, StartSessionBody)
  const started = await startOperatingSession(user, body)
  setResponseStatus(event, 201)
  return started
})
