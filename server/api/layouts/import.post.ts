export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'admin')
  const created = await importLayout(event, user.id)
  setResponseStatus(event, 201)
  return created
})
