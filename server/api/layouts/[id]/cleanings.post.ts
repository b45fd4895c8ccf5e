import { IdParams } from '#shared/schemas/common'
import { CleaningBody } from '#shared/schemas/maintenance'

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'signaller')
  const { id } = await parseParams(event, IdParams)
  const body = await parseBody(event, CleaningBody)
  const layout = await getLayout(id)
  const cleaning = await recordCleaning(useDatabase().sequelize, id, layout.definition as { blocks?: { id: string }[] }, body, user.id)
  setResponseStatus(event, 201)
  return { id: cleaning }
})
