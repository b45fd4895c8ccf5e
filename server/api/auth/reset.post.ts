import { ResetPasswordBody } from '#shared/schemas/mail'

export default defineEventHandler(async (event) => {
  const body = await parseBody(event, ResetPasswordBody)
  await resetPassword(body)
  return { reset: true }
})
