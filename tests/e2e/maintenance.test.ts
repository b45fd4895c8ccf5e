// Track cleaning through the API of the built server, with the demo layout (Wrenfold Junction, invented).
import { beforeAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import type { SessionClient } from '../support/http-client'
import { BASE_URL, signedIn } from '../support/http-client'

await setup({ host: BASE_URL })

describe('track cleaning API', () => {
  let viewer: SessionClient
  let signaller: SessionClient
  let admin: SessionClient
  let id: number
  beforeAll(async () => {
    viewer = await signedIn('viewer')
    signaller = await signedIn('signaller')
    admin = await signedIn('admin')
    id = (await viewer.get('/api/layouts')).body.layouts.find((l: { slug: string }) => l.slug === 'wrenfold').id
  })

  it('lists every block of the layout with its counters and state', async () => {
    const reply = await viewer.get(`/api/layouts/${id}/maintenance`)
    expect(reply.status).toBe(200)
    const layout = (await viewer.get(`/api/layouts/${id}`)).body.layout
    expect(reply.body.blocks.map((b: { block: string }) => b.block).sort()).toEqual(layout.definition.blocks.map((b: { id: string }) => b.id).sort())
    for (const b of reply.body.blocks) expect(['ok', 'due-soon', 'due']).toContain(b.state)
  })

  it('records a cleaning for a signaller, which the list then shows, and refuses a viewer', async () => {
    expect((await viewer.post(`/api/layouts/${id}/cleanings`, { blocks: ['UM1'], method: 'vacuum' })).status).toBe(403)
    const done = await signaller.post(`/api/layouts/${id}/cleanings`, { blocks: ['UM1', 'UM2'], method: 'wipe', notes: 'before the open day' })
    expect(done.status).toBe(201)
    const after = (await viewer.get(`/api/layouts/${id}/maintenance`)).body.blocks
    const um1 = after.find((b: { block: string }) => b.block === 'UM1')
    expect(Date.now() - Date.parse(um1.lastCleanedAt)).toBeLessThan(60_000)
    expect(um1).toMatchObject({ passages: 0, dropouts: 0 })
    const history = (await viewer.get(`/api/layouts/${id}/cleanings`)).body.cleanings
    expect(history[0]).toMatchObject({ id: done.body.id, blocks: ['UM1', 'UM2'], method: 'wipe', notes: 'before the open day' })
  })

  it('names the field at fault for bad input, never a 500', async () => {
    const cases: [unknown, RegExp][] = [
      [{}, /^blocks: /],
      [{ blocks: [], method: 'wipe' }, /^blocks: pick at least one block/],
      [{ blocks: ['UM1'], method: 'sandpaper' }, /^method: one of/],
      [{ blocks: ['NOPE'], method: 'wipe' }, /^blocks: no block "NOPE"/],
      [{ blocks: ['UM1'], method: 'wipe', at: Date.now() + 86_400_000 }, /^at: /],
      [{ blocks: ['UM1'], method: 'wipe', at: 1 }, /^at: not before the year 2000/],
      [{ blocks: ['UM1'], method: 'wipe', notes: 'x'.repeat(2001) }, /^notes: at most/],
    ]
    for (const [body, message] of cases) {
      const reply = await signaller.post(`/api/layouts/${id}/cleanings`, body)
      expect(reply.status, JSON.stringify(body)).toBe(400)
      expect(reply.body.message).toMatch(message)
    }
  })

  it('lets an admin set the thresholds, checked field by field', async () => {
    expect((await signaller.request('PUT', `/api/layouts/${id}/maintenance/thresholds`, { passages: 10, occupiedHours: null, dropouts: null, days: null })).status).toBe(403)
    const bad = await admin.request('PUT', `/api/layouts/${id}/maintenance/thresholds`, { passages: -1, occupiedHours: 1.5, dropouts: null, days: 99999 })
    expect(bad.status).toBe(400)
    expect(bad.body.data.issues.map((i: { path: string }) => i.path).sort()).toEqual(['days', 'occupiedHours', 'passages'])
    const ok = await admin.request('PUT', `/api/layouts/${id}/maintenance/thresholds`, { passages: 300, occupiedHours: 25, dropouts: 6, days: 45 })
    expect(ok.status).toBe(200)
    expect((await viewer.get(`/api/layouts/${id}/maintenance`)).body.thresholds).toEqual({ passages: 300, occupiedHours: 25, dropouts: 6, days: 45 })
  })
})
