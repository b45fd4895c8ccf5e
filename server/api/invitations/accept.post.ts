import { AcceptInvitationBody } from '#shared/schemas/mail'

export default defineEventHandler(async (event) => {
  const body = await parseBody(event, AcceptInvitationBody)
  return { user: await acceptInvitation(event, body) }
})
