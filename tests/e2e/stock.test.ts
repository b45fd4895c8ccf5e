// The stock roster through the API of the built server (demo layout Wrenfold Junction, invented).
// Running arithmetic is checked against a scripted journal in tests/db/stock.test.ts.
import { beforeAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import type { SessionClient } from '../support/http-client'
import { BASE_URL, signedIn } from '../support/http-client'

await setup({ host: BASE_URL })

describe('stock roster API', () => {
  let viewer: SessionClient
  let signaller: SessionClient
  let admin: SessionClient
  let layoutId: number
  beforeAll(async () => {
    viewer = await signedIn('viewer')
    signaller = await signedIn('signaller')
    admin = await signedIn('admin')
    layoutId = (await viewer.get('/api/layouts')).body.layouts.find((l: { slug: string }) => l.slug === 'wrenfold').id
  })

  it('lets an admin add an item, a signaller give it a description and record a service, a viewer only look', async () => {
    const item = { name: 'Pannier tank', number: '5764', serviceHours: 12, serviceKm: null }
    expect((await signaller.post(`/api/layouts/${layoutId}/stock`, item)).status).toBe(403)
    const created = await admin.post(`/api/layouts/${layoutId}/stock`, item)
    expect(created.status).toBe(201)
    const id = created.body.id
    expect((await viewer.request('PUT', `/api/stock/${id}/description`, { description: '2B10' })).status).toBe(403)
    expect((await signaller.request('PUT', `/api/stock/${id}/description`, { description: '2B10' })).status).toBe(200)
    // the same description twice is no new run
    expect((await signaller.request('PUT', `/api/stock/${id}/description`, { description: '2B10' })).status).toBe(200)
    const listed = (await viewer.get(`/api/layouts/${layoutId}/stock`)).body.items.find((i: { id: number }) => i.id === id)
    expect(listed).toMatchObject({ name: 'Pannier tank', number: '5764', description: '2B10', serviceHours: 12, serviceKm: null, state: 'ok', passages: 0 })
    expect((await viewer.post(`/api/stock/${id}/services`, {})).status).toBe(403)
    expect((await signaller.post(`/api/stock/${id}/services`, { note: 'pick-ups cleaned' })).status).toBe(201)
    const log = (await viewer.get(`/api/stock/${id}/services`)).body.services
    expect(log).toMatchObject([{ note: 'pick-ups cleaned', by: expect.any(String) }])
    expect((await signaller.request('PUT', `/api/stock/${id}/description`, { description: null })).status).toBe(200)
    const after = (await viewer.get(`/api/layouts/${layoutId}/stock`)).body.items.find((i: { id: number }) => i.id === id)
    expect(after).toMatchObject({ description: null, lastServicedAt: expect.any(String) })
  })

  it('names the field at fault for bad input, never a 500', async () => {
    const cases: [unknown, RegExp][] = [
      [{ serviceHours: null, serviceKm: null }, /^name: /],
      [{ name: ' ', serviceHours: null, serviceKm: null }, /^name: give the item a name/],
      [{ name: 'A', serviceHours: -1, serviceKm: null }, /^serviceHours: more than 0/],
      [{ name: 'A', serviceHours: null, serviceKm: 'far' }, /^serviceKm: /],
      [{ name: 'A', serviceHours: null, serviceKm: null, photo: 'x' }, /^photo: /],
      [{ name: 'A', serviceHours: null, serviceKm: null, photo: '00000000-0000-4000-8000-000000000000' }, /^photo: no uploaded photo/],
    ]
    for (const [body, message] of cases) {
      const reply = await admin.post(`/api/layouts/${layoutId}/stock`, body)
      expect(reply.status, JSON.stringify(body)).toBe(400)
      expect(reply.body.message).toMatch(message)
    }
    const long = await signaller.request('PUT', '/api/stock/1/description', { description: '12345678901234567' })
    expect(long.status).toBe(400)
    expect(long.body.message).toMatch(/^description: at most 16 characters/)
  })
})
