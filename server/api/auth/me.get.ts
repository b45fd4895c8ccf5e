export default defineEventHandler(async (event) => {
  return { user: await requireRole(event, 'viewer') }
})
