import fsDriver from 'unstorage/drivers/fs'
import s3Driver from 'unstorage/drivers/s3'

/**
 * Where uploaded photos are kept. nuxt.config.ts mounts `uploads` on the filesystem under `.data/uploads`;
 * BLOCKBELL_UPLOADS_DIR moves that folder, and BLOCKBELL_UPLOADS_S3_BUCKET (with _ENDPOINT, _REGION,
 * _ACCESS_KEY_ID and _SECRET_ACCESS_KEY) puts them in an S3-compatible bucket instead.
 */
export default defineNitroPlugin(() => {
  const env = process.env
  const storage = useStorage()
  // unmount without disposing runs at once (nothing to await), so the new mount is in place before any request
  const remount = (driver: Parameters<typeof storage.mount>[1]) => {
    void storage.unmount('uploads', false)
    storage.mount('uploads', driver)
  }
  if (env.BLOCKBELL_UPLOADS_S3_BUCKET) {
    const missing = ['ENDPOINT', 'ACCESS_KEY_ID', 'SECRET_ACCESS_KEY'].filter(k => !env[`BLOCKBELL_UPLOADS_S3_${k}`])
    if (missing.length) throw new Error(`Uploads: BLOCKBELL_UPLOADS_S3_BUCKET is set but ${missing.map(k => `BLOCKBELL_UPLOADS_S3_${k}`).join(', ')} is not`)
    remount(s3Driver({
      bucket: env.BLOCKBELL_UPLOADS_S3_BUCKET,
      endpoint: env.BLOCKBELL_UPLOADS_S3_ENDPOINT!,
      region: env.BLOCKBELL_UPLOADS_S3_REGION ?? 'auto',
      accessKeyId: env.BLOCKBELL_UPLOADS_S3_ACCESS_KEY_ID!,
      secretAccessKey: env.BLOCKBELL_UPLOADS_S3_SECRET_ACCESS_KEY!,
    }))
  } else if (env.BLOCKBELL_UPLOADS_DIR) {
    remount(fsDriver({ base: env.BLOCKBELL_UPLOADS_DIR }))
  }
})
