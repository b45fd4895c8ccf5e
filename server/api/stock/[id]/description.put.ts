import { IdParams } from '#shared/schemas/common'
import { StockDescriptionBody } from '#shared/schemas/maintenance'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'signaller')
  const { id } = await parseParams(event, IdParams)
  const { description } = await parseBody(event, StockDescriptionBody)
  await setStockDescription(useDatabase().sequelize, id, description)
  return { id, description }
})
