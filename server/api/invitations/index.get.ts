export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  return { invitations: await listOpenInvitations() }
})
