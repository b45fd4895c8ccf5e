import { IdParams } from '#shared/schemas/common'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'viewer')
  const { id } = await parseParams(event, IdParams)
  await getLayout(id)
  return { tasks: await listMaintenanceTasks(useDatabase().sequelize, id) }
})
