import { SignOutBody } from '#shared/schemas/account'

export default defineEventHandler(async (event) => {
  const body = await parseBody(event, SignOutBody)
  await signOut(event, body)
  return { signedOut: true }
})
