export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'signaller')
  const { bytes, name } = await readUploadField(event)
  const photo = await storeUpload(bytes, name, user.id)
  setResponseStatus(event, 201)
  return photo
})
