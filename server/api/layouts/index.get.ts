export default defineEventHandler(async (event) => {
  await requireRole(event, 'viewer')
  return { layouts: await listLayouts() }
})
