export default defineEventHandler(async (event) => {
  await requireRole(event, 'viewer')
  return { count: await maintenanceDueCount(useDatabase().sequelize) }
})
