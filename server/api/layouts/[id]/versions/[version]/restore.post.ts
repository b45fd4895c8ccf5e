import { RestoreVersionBody, VersionParams } from '#shared/schemas/layout-api'

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'admin')
  const { id, version } = await parseParams(event, VersionParams)
  const { baseVersion } = await parseBody(event, RestoreVersionBody)
  return await restoreLayoutVersion(id, version, baseVersion, user.id)
})
