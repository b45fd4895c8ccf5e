import { ChangePasswordBody } from '#shared/schemas/account'

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'viewer')
  const body = await parseBody(event, ChangePasswordBody)
  await changeOwnPassword(event, user.id, body.currentPassword, body.newPassword)
  return { changed: true }
})
