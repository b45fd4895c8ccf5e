import { IdParams } from '#shared/schemas/common'
import { TaskDoneBody } from '#shared/schemas/maintenance'

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'signaller')
  const { id } = await parseParams(event, IdParams)
  const { note } = await parseBody(event, TaskDoneBody)
  const entry = await recordTaskDone(useDatabase().sequelize, id, note, user.id)
  setResponseStatus(event, 201)
  return { id: entry }
})
