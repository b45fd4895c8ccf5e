import { SignInBody } from '#shared/schemas/account'

export default defineEventHandler(async (event) => {
  const body = await parseBody(event, SignInBody)
  return { user: await signIn(event, body) }
})
