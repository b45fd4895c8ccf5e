import { IdParams } from '#shared/schemas/common'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'viewer')
  const { id } = await parseParams(event, IdParams)
  const layout = await getLayout(id)
  return layoutMaintenance(useDatabase().sequelize, id, layout.definition as { blocks?: { id: string, name?: string }[] })
})
