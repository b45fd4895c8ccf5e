import { TokenBody } from '#shared/schemas/mail'

// Open to everyone: the token is the right to see which address and role the invitation is for.
export default defineEventHandler(async (event) => {
  const { token } = await parseBody(event, TokenBody)
  return { invitation: await checkInvitation(token) }
})
