import { IdParams } from '#shared/schemas/common'
import { ThresholdsBody } from '#shared/schemas/maintenance'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const body = await parseBody(event, ThresholdsBody)
  await getLayout(id)
  return { thresholds: await setCleaningThresholds(useDatabase().sequelize, id, body) }
})
