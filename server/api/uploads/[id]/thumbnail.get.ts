import { UploadParams } from '#shared/schemas/uploads'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'viewer')
  const { id } = await parseParams(event, UploadParams)
  return sendUpload(event, await readUpload(id, 'thumbnail'))
})
