// Photo uploads through the built server: images recognised by their content (file-type), thumbnails made with
// sharp, kept in the uploads storage (a folder of this test run), served back as what they are.
import { existsSync, readdirSync } from 'node:fs'
import { beforeAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import sharp from 'sharp'
import { BASE_URL, SessionClient, signedIn } from '../support/http-client'

await setup({ host: BASE_URL })

const UPLOADS_DIR = process.env.BLOCKBELL_UPLOADS_DIR!
const stored = () => existsSync(UPLOADS_DIR) ? readdirSync(UPLOADS_DIR).length : 0

async function upload(client: SessionClient, bytes: Buffer, name: string, type: string) {
  const form = new FormData()
  form.append('file', new Blob([new Uint8Array(bytes)], { type }), name)
  const response = await fetch(`${BASE_URL}/api/uploads`, { method: 'POST', body: form, headers: { cookie: client.cookieHeader, accept: 'application/json' } })
  return { status: response.status, body: await response.json() as { id: string, url: string, thumbnailUrl: string, message?: string } }
}

async function download(client: SessionClient, path: string) {
  const response = await fetch(BASE_URL + path, { headers: { cookie: client.cookieHeader } })
  return { status: response.status, headers: response.headers, bytes: Buffer.from(await response.arrayBuffer()) }
}

// A 1200 x 800 photo-like picture: a gradient, so the encoders have real content to work with.
const picture = (width: number, height: number) => sharp({ create: { width, height, channels: 3, background: '#6a8f5a' } })
  .composite([{ input: Buffer.from(`<svg width="${width}" height="${height}"><rect x="100" y="100" width="400" height="200" fill="#c8b27a"/></svg>`) }])

describe('photo uploads', () => {
  let viewer: SessionClient
  let signaller: SessionClient
  let layoutId: number
  beforeAll(async () => {
    viewer = await signedIn('viewer')
    signaller = await signedIn('signaller')
    layoutId = (await viewer.get('/api/layouts')).body.layouts.find((l: { slug: string }) => l.slug === 'wrenfold').id
  })

  it('takes a JPEG and a PNG, makes a thumbnail of each and serves both back as what they are', async () => {
    for (const [format, mime] of [['jpeg', 'image/jpeg'], ['png', 'image/png']] as const) {
      const bytes = await picture(1200, 800).toFormat(format).toBuffer()
      const reply = await upload(signaller, bytes, `ballast.${format}`, mime)
      expect(reply.status, JSON.stringify(reply.body)).toBe(201)
      expect(reply.body).toEqual({ id: expect.stringMatching(/^[0-9a-f-]{36}$/), url: `/api/uploads/${reply.body.id}`, thumbnailUrl: `/api/uploads/${reply.body.id}/thumbnail` })
      const original = await download(viewer, reply.body.url)
      expect(original.status).toBe(200)
      expect(original.headers.get('content-type')).toBe(mime)
      expect(original.headers.get('x-content-type-options')).toBe('nosniff')
      expect(original.bytes.equals(bytes)).toBe(true)
      const thumbnail = await download(viewer, reply.body.thumbnailUrl)
      expect(thumbnail.headers.get('content-type')).toBe('image/jpeg')
      expect(thumbnail.headers.get('x-content-type-options')).toBe('nosniff')
      // read back by sharp: a real JPEG, scaled to fit 320 x 320 with the picture's 3:2 shape kept
      expect(await sharp(thumbnail.bytes).metadata()).toMatchObject({ format: 'jpeg', width: 320, height: 213 })
    }
  })

  it('refuses a text file named .jpg, an oversized photo and a form without a file, and stores nothing for them', async () => {
    const before = stored()
    const text = await upload(signaller, Buffer.from('Wrenfold Junction track plan, not a picture\n'.repeat(20)), 'track.jpg', 'image/jpeg')
    expect(text.status).toBe(400)
    expect(text.body.message).toMatch(/^file: not a photo Blockbell takes \(JPEG, PNG, WebP\)/)
    // 11 MB of a real PNG header followed by noise: refused by size before its content is looked at
    const big = Buffer.concat([await picture(10, 10).png().toBuffer(), Buffer.alloc(11 * 1024 * 1024, 7)])
    const tooBig = await upload(signaller, big, 'big.png', 'image/png')
    expect(tooBig.status).toBe(413)
    expect(tooBig.body.message).toBe('file: at most 10 MB')
    const jpegHeadOnly = Buffer.from([0xFF, 0xD8, 0xFF, 0xE0, 0x00, 0x10, 0x4A, 0x46, 0x49, 0x46, 0x00, 0x01, 0x01, 0x00, 0x00, 0x01, 0x00, 0x01, 0x00, 0x00])
    const broken = await upload(signaller, jpegHeadOnly, 'cut-off.jpg', 'image/jpeg')
    expect(broken.status).toBe(400)
    expect(broken.body.message).toMatch(/^file: the image could not be read/)
    const form = new FormData()
    form.append('note', 'no file here')
    const empty = await fetch(`${BASE_URL}/api/uploads`, { method: 'POST', body: form, headers: { cookie: signaller.cookieHeader } })
    expect(empty.status).toBe(400)
    expect(((await empty.json()) as { message: string }).message).toMatch(/^file: choose a photo/)
    expect(stored()).toBe(before)
  })

  it('lets viewers look but not upload, and signed-out visitors neither', async () => {
    const bytes = await picture(64, 64).png().toBuffer()
    const before = stored()
    expect((await upload(viewer, bytes, 'a.png', 'image/png')).status).toBe(403)
    expect((await upload(new SessionClient(), bytes, 'a.png', 'image/png')).status).toBe(401)
    expect(stored()).toBe(before)
    const mine = await upload(signaller, bytes, 'a.png', 'image/png')
    expect((await download(new SessionClient(), mine.body.url)).status).toBe(401)
    expect((await download(viewer, '/api/uploads/00000000-0000-4000-8000-000000000000')).status).toBe(404)
    expect((await download(viewer, '/api/uploads/not-an-id')).status).toBe(400)
  })

  it('attaches photos to a cleaning, listed with its history; an unknown photo id is refused by name', async () => {
    const photo = (await upload(signaller, await picture(800, 600).jpeg().toBuffer(), 'um3.jpg', 'image/jpeg')).body
    const done = await signaller.post(`/api/layouts/${layoutId}/cleanings`, { blocks: ['UM3'], method: 'dry brush', photos: [photo.id] })
    expect(done.status, JSON.stringify(done.body)).toBe(201)
    const history = (await viewer.get(`/api/layouts/${layoutId}/cleanings`)).body.cleanings
    expect(history.find((c: { id: number }) => c.id === done.body.id).photos).toEqual([photo])
    const unknown = await signaller.post(`/api/layouts/${layoutId}/cleanings`, { blocks: ['UM3'], method: 'wipe', photos: ['00000000-0000-4000-8000-000000000000'] })
    expect(unknown.status).toBe(400)
    expect(unknown.body.message).toMatch(/^photos: no uploaded photo 00000000-/)
    const notId = await signaller.post(`/api/layouts/${layoutId}/cleanings`, { blocks: ['UM3'], method: 'wipe', photos: ['x'] })
    expect(notId.status).toBe(400)
    expect(notId.body.message).toMatch(/^photos\.0: /)
  })
})
