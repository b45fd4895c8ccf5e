import { IdParams } from '#shared/schemas/common'
import { StockBody } from '#shared/schemas/maintenance'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const body = await parseBody(event, StockBody)
  await getLayout(id)
  const created = await createStockItem(useDatabase().sequelize, id, body)
  setResponseStatus(event, 201)
  return { id: created }
})
