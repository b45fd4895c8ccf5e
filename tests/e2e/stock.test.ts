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

  const inRoster = async (id: number) => (await viewer.get(`/api/layouts/${layoutId}/stock`)).body.items.find((i: { id: number }) => i.id === id)

  it('lets an admin change an item; its services and description stay; others are refused', async () => {
    const id = (await admin.post(`/api/layouts/${layoutId}/stock`, { name: 'Saddle tank', number: '1501', notes: 'weathered', serviceHours: 10, serviceKm: null })).body.id
    expect((await signaller.request('PUT', `/api/stock/${id}/description`, { description: '3F07' })).status).toBe(200)
    expect((await signaller.post(`/api/stock/${id}/services`, { note: 'motor oiled' })).status).toBe(201)
    const change = { name: 'Saddle tank (rebuilt)', number: '1502', serviceHours: null, serviceKm: 40 }
    for (const who of [viewer, signaller]) expect((await who.request('PUT', `/api/stock/${id}`, change)).status).toBe(403)
    expect(await inRoster(id)).toMatchObject({ name: 'Saddle tank', number: '1501' })
    const reply = await admin.request('PUT', `/api/stock/${id}`, change)
    expect(reply.status, JSON.stringify(reply.body)).toBe(200)
    // the form sends the whole item: notes left out are cleared, the rest is what was sent
    expect(await inRoster(id)).toMatchObject({ ...change, notes: null, photo: null, description: '3F07', serviceCount: 1, lastServicedAt: expect.any(String) })
  })

  it('changing an item names the field at fault, 404 for an unknown id, never a 500', async () => {
    const id = (await admin.post(`/api/layouts/${layoutId}/stock`, { name: 'Railbus', serviceHours: null, serviceKm: null })).body.id
    const cases: [unknown, RegExp][] = [
      [{ name: '', serviceHours: null, serviceKm: null }, /^name: give the item a name/],
      [{ name: 'x'.repeat(81), serviceHours: null, serviceKm: null }, /^name: at most 80 characters/],
      [{ name: 'Railbus', number: 'n'.repeat(33), serviceHours: null, serviceKm: null }, /^number: at most 32 characters/],
      [{ name: 'Railbus', serviceHours: 0, serviceKm: null }, /^serviceHours: more than 0/],
      [{ name: 'Railbus', serviceHours: null }, /^serviceKm: /],
      [{ name: 'Railbus', serviceHours: null, serviceKm: null, photo: '00000000-0000-4000-8000-000000000000' }, /^photo: no uploaded photo/],
    ]
    for (const [body, message] of cases) {
      const reply = await admin.request('PUT', `/api/stock/${id}`, body)
      expect(reply.status, JSON.stringify(body)).toBe(400)
      expect(reply.body.message).toMatch(message)
    }
    expect(await inRoster(id)).toMatchObject({ name: 'Railbus' })
    const unknown = await admin.request('PUT', '/api/stock/999999', { name: 'Railbus', serviceHours: null, serviceKm: null })
    expect(unknown.status).toBe(404)
    expect(unknown.body.message).toMatch(/^id: no stock item with id 999999/)
    for (const bad of ['abc', '0', '2147483648']) {
      const reply = await admin.request('PUT', `/api/stock/${bad}`, { name: 'Railbus', serviceHours: null, serviceKm: null })
      expect(reply.status, bad).toBe(400)
      expect(reply.body.message, bad).toMatch(/^id: /)
    }
  })

  it('lets an admin remove an item with its service records, once; others are refused', async () => {
    const id = (await admin.post(`/api/layouts/${layoutId}/stock`, { name: 'Brake van', serviceHours: null, serviceKm: 25 })).body.id
    expect((await signaller.post(`/api/stock/${id}/services`, { note: 'couplings checked' })).status).toBe(201)
    expect((await signaller.post(`/api/stock/${id}/services`, { note: 'lamp bracket refitted' })).status).toBe(201)
    expect((await signaller.request('PUT', `/api/stock/${id}/description`, { description: '9T50' })).status).toBe(200)
    expect(await inRoster(id)).toMatchObject({ serviceCount: 2 })
    for (const who of [viewer, signaller]) expect((await who.request('DELETE', `/api/stock/${id}`)).status).toBe(403)
    expect(await inRoster(id)).toBeDefined()
    const removed = await admin.request('DELETE', `/api/stock/${id}`)
    expect(removed.status, JSON.stringify(removed.body)).toBe(200)
    expect(removed.body).toEqual({ deleted: id, services: 2 })
    expect(await inRoster(id)).toBeUndefined()
    expect((await viewer.get(`/api/stock/${id}/services`)).status).toBe(404)
    const again = await admin.request('DELETE', `/api/stock/${id}`)
    expect(again.status).toBe(404)
    expect(again.body.message).toMatch(/^id: no stock item with id/)
    expect((await admin.request('DELETE', '/api/stock/x')).status).toBe(400)
  })
})
