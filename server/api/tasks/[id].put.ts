import { IdParams } from '#shared/schemas/common'
import { TaskBody } from '#shared/schemas/maintenance'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const body = await parseBody(event, TaskBody)
  await updateMaintenanceTask(useDatabase().sequelize, id, body)
  return { id }
})
