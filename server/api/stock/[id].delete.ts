import { IdParams } from '#shared/schemas/common'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const { services } = await deleteStockItem(useDatabase().sequelize, id)
  return { deleted: id, services }
})
