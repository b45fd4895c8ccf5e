import { IdParams } from '#shared/schemas/common'
import { StockServiceBody } from '#shared/schemas/maintenance'

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'signaller')
  const { id } = await parseParams(event, IdParams)
  const { note } = await parseBody(event, StockServiceBody)
  const service = await recordStockService(useDatabase().sequelize, id, note, user.id)
  setResponseStatus(event, 201)
  return { id: service }
})
