import { IdParams } from '#shared/schemas/common'
import { StockBody } from '#shared/schemas/maintenance'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const body = await parseBody(event, StockBody)
  await updateStockItem(useDatabase().sequelize, id, body)
  return { id }
})
