import { randomUUID } from 'node:crypto'
import type { H3Event } from 'h3'
import { fileTypeFromBuffer } from 'file-type'
import sharp from 'sharp'
import { QueryTypes } from 'sequelize'
import { UPLOAD_MAX_BYTES, UPLOAD_IMAGE_TYPES, type UploadedPhoto } from '#shared/types/uploads'
import { uploadedPhoto } from './upload-records'

const THUMBNAIL_SIZE = 320
/** Refuses images whose pixel count would take far more memory to decode than their file size suggests. */
const MAX_PIXELS = 50_000_000
/** Room for the multipart boundaries and headers around the file. */
const FORM_OVERHEAD = 64 * 1024

const megabytes = (n: number) => `${(n / 1024 / 1024).toFixed(n % (1024 * 1024) ? 1 : 0)} MB`
const tooLarge = () => createError({ statusCode: 413, statusMessage: 'Content Too Large', message: `file: at most ${megabytes(UPLOAD_MAX_BYTES)}` })
const refused = (message: string) => createError({ statusCode: 400, statusMessage: 'Bad Request', message, data: { issues: [{ path: 'file', message: message.replace(/^file: /, '') }] } })

/** The request body, read no further than the limit (a larger body is refused before it is all in memory). */
async function readCappedBody(event: H3Event): Promise<Buffer> {
  const declared = Number(getRequestHeader(event, 'content-length') ?? 0)
  if (declared > UPLOAD_MAX_BYTES + FORM_OVERHEAD) throw tooLarge()
  const chunks: Buffer[] = []
  let size = 0
  for await (const chunk of event.node.req as AsyncIterable<Buffer>) {
    size += chunk.length
    if (size > UPLOAD_MAX_BYTES + FORM_OVERHEAD) {
      event.node.req.destroy()
      throw tooLarge()
    }
    chunks.push(chunk)
  }
  return Buffer.concat(chunks)
}

/** The `file` field of a multipart form posted to the upload route. */
export async function readUploadField(event: H3Event): Promise<{ bytes: Buffer, name: string | null }> {
  const type = getRequestHeader(event, 'content-type') ?? ''
  if (!/^multipart\/form-data\s*;/i.test(type)) throw refused('file: send the photo as multipart/form-data in a field named "file"')
  const body = await readCappedBody(event)
  let form: FormData
  try {
    form = await new Request('http://upload.invalid/', { method: 'POST', headers: { 'content-type': type }, body: new Uint8Array(body) }).formData()
  } catch {
    throw refused('file: the form could not be read; send the photo as multipart/form-data in a field named "file"')
  }
  const file = form.get('file')
  if (!file || typeof file === 'string') throw refused('file: choose a photo to upload (field "file")')
  if (file.size > UPLOAD_MAX_BYTES) throw tooLarge()
  if (file.size === 0) throw refused('file: the file is empty')
  return { bytes: Buffer.from(await file.arrayBuffer()), name: file.name ? file.name.slice(0, 255) : null }
}

/**
 * Checks that the bytes are an image Blockbell takes (by their content, never their name), makes its thumbnail
 * and stores both; nothing is stored for a refused file. Returns the photo's id and addresses.
 */
export async function storeUpload(bytes: Buffer, name: string | null, userId: number): Promise<UploadedPhoto> {
  const detected = await fileTypeFromBuffer(bytes)
  const allowed = Object.keys(UPLOAD_IMAGE_TYPES)
  if (!detected || !allowed.includes(detected.mime)) {
    throw refused(`file: not a photo Blockbell takes (${Object.values(UPLOAD_IMAGE_TYPES).join(', ')}); its content is ${detected ? detected.mime : 'not a known image format'}`)
  }
  let width: number, height: number, thumbnail: Buffer
  try {
    const image = sharp(bytes, { limitInputPixels: MAX_PIXELS, failOn: 'error' })
    const meta = await image.metadata()
    width = meta.autoOrient?.width ?? meta.width
    height = meta.autoOrient?.height ?? meta.height
    thumbnail = await image.rotate().resize(THUMBNAIL_SIZE, THUMBNAIL_SIZE, { fit: 'inside', withoutEnlargement: true }).jpeg({ quality: 80 }).toBuffer()
  } catch (e) {
    const message = String((e as Error).message ?? e)
    throw refused(/pixel limit/i.test(message)
      ? `file: the image is too large in pixels (at most ${(MAX_PIXELS / 1e6).toFixed(0)} megapixels)`
      : 'file: the image could not be read; it may be damaged')
  }
  const id = randomUUID()
  const storage = useStorage('uploads')
  const db = useDatabase()
  await db.sequelize.transaction(async (transaction) => {
    await db.sequelize.query(`
      INSERT INTO uploads (id, content_type, bytes, width, height, original_name, uploaded_by)
      VALUES (:id, :type, :size, :width, :height, :name, :userId)
    `, { replacements: { id, type: detected.mime, size: bytes.length, width, height, name, userId }, transaction })
    try {
      await storage.setItemRaw(`${id}:original`, bytes)
      await storage.setItemRaw(`${id}:thumbnail`, thumbnail)
    } catch (e) {
      await Promise.allSettled([storage.removeItem(`${id}:original`), storage.removeItem(`${id}:thumbnail`)])
      throw e
    }
  })
  return uploadedPhoto(id)
}

/** The stored bytes of a photo or its thumbnail, with their content type; 404 when there is none. */
export async function readUpload(id: string, kind: 'original' | 'thumbnail'): Promise<{ type: string, bytes: Buffer }> {
  const [row] = await useDatabase().sequelize.query<{ content_type: string }>(
    'SELECT content_type FROM uploads WHERE id = :id', { replacements: { id }, type: QueryTypes.SELECT })
  const bytes = row ? await useStorage('uploads').getItemRaw<Buffer>(`${id}:${kind}`) : null
  if (!row || !bytes) throw createError({ statusCode: 404, message: `id: no photo ${id}` })
  return { type: kind === 'thumbnail' ? 'image/jpeg' : row.content_type, bytes: Buffer.from(bytes) }
}

/** Sends stored bytes as an image: its own type, never sniffed, kept private to signed-in browsers. */
export function sendUpload(event: H3Event, upload: { type: string, bytes: Buffer }) {
  setResponseHeaders(event, {
    'content-type': upload.type,
    'x-content-type-options': 'nosniff',
    'cache-control': 'private, max-age=86400',
    'content-disposition': 'inline',
    'content-security-policy': 'default-src \'none\'; sandbox',
  })
  return upload.bytes
}
