import { InviteBody } from '#shared/schemas/mail'

export default defineEventHandler(async (event) => {
  const admin = await requireRole(event, 'admin')
  const body = await parseBody(event, InviteBody)
  const invitation = await inviteByEmail(admin, body)
  setResponseStatus(event, 201)
  return invitation
})
