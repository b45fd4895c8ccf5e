/** What the upload route answers: the photo's id, its address and its thumbnail's. */
export interface UploadedPhoto { id: string, url: string, thumbnailUrl: string }

/** Largest photo Blockbell takes. */
export const UPLOAD_MAX_BYTES = 10 * 1024 * 1024

/** The image formats Blockbell takes, recognised by their content, with the names people know them by. */
export const UPLOAD_IMAGE_TYPES: Record<string, string> = { 'image/jpeg': 'JPEG', 'image/png': 'PNG', 'image/webp': 'WebP' }
