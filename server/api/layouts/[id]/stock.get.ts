import { IdParams } from '#shared/schemas/common'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'viewer')
  const { id } = await parseParams(event, IdParams)
  const layout = await getLayout(id)
  return { items: await listStock(useDatabase().sequelize, id, layout.definition as never) }
})
