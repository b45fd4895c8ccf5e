import { describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import { parse } from 'csv-parse/sync'
import demoLayout from '#shared/layouts/demo-layout.json' with { type: 'json' }
import { BASE_URL, signedIn, unique } from '../support/http-client'

await setup({ host: BASE_URL })

// The wiring schedule of the demo layout: every detector, signal and turnout with its MQTT topic
// (docs/mqtt-topics.md), as JSON and as CSV read back by a CSV parser from npm (csv-parse, RFC 4180).
async function demoId() {
  const viewer = await signedIn('viewer')
  return { viewer, id: (await viewer.get('/api/layouts')).body.layouts.find((l: { slug: string }) => l.slug === 'wrenfold').id as number }
}

describe('wiring schedule', () => {
  it('lists every item of the demo layout with its block and topic in the CSV', async () => {
    const { viewer, id } = await demoId()
    const response = await fetch(`${BASE_URL}/api/layouts/${id}/wiring.csv`, { headers: { cookie: viewer.cookieHeader } })
    expect(response.status).toBe(200)
    expect(response.headers.get('content-type')).toMatch(/^text\/csv/)
    expect(response.headers.get('content-disposition')).toBe('attachment; filename="wrenfold-wiring.csv"')
    const text = await response.text()
    expect(text).toContain('\r\n') // RFC 4180 line ends
    const rows = parse(text, { columns: true }) as Record<string, string>[]
    const detectors = demoLayout.blocks.flatMap(b => b.detectors.map(d => ({ kind: 'detector', id: d, block: b.id, topic: `blockbell/v1/wrenfold/detector/${d}` })))
    const signals = demoLayout.signals.map(s => ({ kind: 'signal', id: s.id, block: s.from, topic: `blockbell/v1/wrenfold/signal/${s.id}` }))
    const turnouts = demoLayout.turnouts.map(t => ({ kind: 'turnout', id: t.id, block: t.block, topic: `blockbell/v1/wrenfold/turnout/${t.id}` }))
    expect(rows.map(({ kind, id, block, topic }) => ({ kind, id, block, topic }))).toEqual([...detectors, ...signals, ...turnouts])
    expect(Object.keys(rows[0]!)).toEqual(['kind', 'id', 'block', 'area', 'topic', 'controller'])
  })

  it('assigns an item to a controller from the devices list (admin only), shown in the CSV; unknown items are refused', async () => {
    const { id } = await demoId()
    const admin = await signedIn('admin')
    const name = `Quillbury board, "up" side ${unique()}`
    const device = (await admin.post('/api/devices', { username: `quill-${unique()}`, name, password: 'board-password-1' })).body.device
    const assigned = await admin.request('PUT', `/api/layouts/${id}/wiring`, { kind: 'detector', item: 'D02', deviceId: device.id })
    expect(assigned.status).toBe(200)
    expect(assigned.body.item).toMatchObject({ id: 'D02', device: name })
    const csv = await (await fetch(`${BASE_URL}/api/layouts/${id}/wiring.csv`, { headers: { cookie: admin.cookieHeader } })).text()
    expect(csv).toContain(`"${name.replace(/"/g, '""')}"`) // quotes doubled inside a quoted field (RFC 4180 §2)
    const row = (parse(csv, { columns: true }) as Record<string, string>[]).find(r => r.id === 'D02')
    expect(row!.controller).toBe(name)
    expect((await admin.request('PUT', `/api/layouts/${id}/wiring`, { kind: 'detector', item: 'NOPE', deviceId: device.id })).status).toBe(400)
    expect((await admin.request('PUT', `/api/layouts/${id}/wiring`, { kind: 'detector', item: 'D02', deviceId: null })).body.item.device).toBeNull()
  })
})
