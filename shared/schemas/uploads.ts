import { z } from './zod'

export const UploadId = z.uuid('a photo id')

/** Route parameter `id` of a photo. */
export const UploadParams = z.object({ id: UploadId })
