import { IdParams } from '#shared/schemas/common'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const { doneEntries } = await deleteMaintenanceTask(useDatabase().sequelize, id)
  return { deleted: id, doneEntries }
})
