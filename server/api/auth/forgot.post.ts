import { ForgotPasswordBody } from '#shared/schemas/mail'

export default defineEventHandler(async (event) => {
  const body = await parseBody(event, ForgotPasswordBody)
  await requestPasswordReset(event, body)
  setResponseStatus(event, 202)
  return { message: FORGOT_ANSWER }
})
