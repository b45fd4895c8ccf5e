import { QueryTypes, type Sequelize } from 'sequelize'
import type { UploadedPhoto } from '#shared/types/uploads'

/** A stored photo's id with the addresses it is served from. */
export function uploadedPhoto(id: string): UploadedPhoto {
  return { id, url: `/api/uploads/${id}`, thumbnailUrl: `/api/uploads/${id}/thumbnail` }
}

/** The ids among `ids` that are not stored photos. */
export async function missingUploadIds(sequelize: Sequelize, ids: string[]): Promise<string[]> {
  if (!ids.length) return []
  const rows = await sequelize.query<{ id: string }>(
    'SELECT id::text FROM uploads WHERE id = ANY(ARRAY[:ids]::uuid[])', { replacements: { ids }, type: QueryTypes.SELECT })
  const found = new Set(rows.map(r => r.id))
  return ids.filter(id => !found.has(id))
}
