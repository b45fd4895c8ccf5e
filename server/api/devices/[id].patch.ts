import { IdParams } from '#shared/schemas/common'
import { UpdateDeviceBody } from '#shared/schemas/device'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const { id } = await parseParams(event, IdParams)
  const body = await parseBody(event, UpdateDeviceBody)
  return { device: await updateDevice(id, body) }
})
