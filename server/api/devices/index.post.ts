import { CreateDeviceBody } from '#shared/schemas/device'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const body = await parseBody(event, CreateDeviceBody)
  setResponseStatus(event, 201)
  return { device: await createDevice(body) }
})
