import { z } from 'zod'

// Archived layouts only with ?archived=1 (the Layouts screen): the Panel, Sessions and Maintenance lists leave them out.
const Query = z.object({ archived: z.enum(['0', '1'], { error: 'archived is 0 or 1' }).optional() })

export default defineEventHandler(async (event) => {
  await requireRole(event, 'viewer')
  const { archived } = await parseQuery(event, Query)
  return { layouts: await listLayouts({ archived: archived === '1' }) }
})
