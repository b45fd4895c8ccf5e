import { VersionParams } from '#shared/schemas/layout-api'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'viewer')
  const { id, version } = await parseParams(event, VersionParams)
  return { version: await getLayoutVersion(id, version) }
})
