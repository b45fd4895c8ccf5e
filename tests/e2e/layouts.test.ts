import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import { QueryTypes } from 'sequelize'
import { openDatabase, type Database } from '../../server/database/connection'
import { databaseSettings } from '../../server/database/config'
import { BASE_URL, signedIn, unique, type SessionClient } from '../support/http-client'
import { LiveClient } from '../support/live-client'
import { lineLayout } from '../support/layout-fixtures'
import { runFakeLayoutScript } from '../support/fake-layout-process'

await setup({ host: BASE_URL })

// Owners' layouts through the API, against the built server and its PostgreSQL database.
const fixture = (name: string) => readFileSync(new URL(`../fixtures/layouts/${name}`, import.meta.url))
let db: Database
let admin: SessionClient
let adminName: string
let existing: Set<number>

async function upload(client: SessionClient, body: Buffer | string, filename = 'layout.json', type = 'application/json') {
  const form = new FormData()
  form.append('file', new Blob([typeof body === 'string' ? body : new Uint8Array(body)], { type }), filename)
  const response = await fetch(`${BASE_URL}/api/layouts/import`, { method: 'POST', body: form, headers: { cookie: client.cookieHeader, accept: 'application/json' } })
  return { status: response.status, body: await response.json() as { data: { issues: { path: string, message: string }[] }, id: number, slug: string } }
}

async function tableCounts() {
  const [row] = await db.sequelize.query<{ layouts: string, versions: string }>(
    'SELECT (SELECT count(*) FROM layouts) AS layouts, (SELECT count(*) FROM layout_versions) AS versions', { type: QueryTypes.SELECT })
  return row
}

async function create(name = `Hollin bank ${unique()}`, definition: unknown = lineLayout(name)) {
  const reply = await admin.post('/api/layouts', { name, definition })
  expect(reply.status, JSON.stringify(reply.body)).toBe(201)
  return reply.body as { id: number, slug: string, version: number }
}

beforeAll(async () => {
  db = openDatabase({ ...databaseSettings(), database: process.env.BLOCKBELL_DB_NAME ?? 'blockbell_e2e' })
  admin = await signedIn('admin')
  adminName = (await admin.get('/api/auth/me')).body.user.name
  existing = new Set((await admin.get('/api/layouts')).body.layouts.map((l: { id: number }) => l.id))
})
afterAll(async () => {
  // the layouts made here are archived, so the Panel's list is as the other tests expect it
  for (const l of (await admin.get('/api/layouts')).body.layouts) if (!existing.has(l.id) && !l.archived) await admin.patch(`/api/layouts/${l.id}`, { archived: true })
  await db.sequelize.close()
})

describe('layouts: create, rename, duplicate, archive, delete', () => {
  it('creates a layout from a definition, a blank one and a copy, each with its own slug', async () => {
    const made = await create('Hollin Bank')
    expect(made.version).toBe(1)
    expect(made.slug).toMatch(/^hollin-bank(-\d+)?$/)
    const blank = await admin.post('/api/layouts', { name: 'Sallow Yard' })
    expect(blank.status).toBe(201)
    const blankLayout = (await admin.get(`/api/layouts/${blank.body.id}`)).body.layout
    expect(blankLayout.definition.blocks).toHaveLength(1)
    const copy = await admin.post('/api/layouts', { name: 'Hollin Bank copy', copyOf: made.id })
    expect(copy.status).toBe(201)
    const copied = (await admin.get(`/api/layouts/${copy.body.id}`)).body.layout
    expect(copied.definition.blocks.map((b: { id: string }) => b.id)).toEqual(['B1', 'B2', 'B3', 'B4'])
    expect(copied.definition.name).toBe('Hollin Bank copy')
  })

  it('refuses an invalid definition with every error and its path, storing nothing', async () => {
    const before = await tableCounts()
    const broken = JSON.parse(String(fixture('unknown-references.json')))
    const reply = await admin.post('/api/layouts', { name: 'Broken', definition: broken })
    expect(reply.status).toBe(400)
    expect(reply.body.data.issues.map((i: { path: string }) => i.path)).toEqual(['definition.links[0].to', 'definition.signals[0].protects'])
    expect(await tableCounts()).toEqual(before)
  })

  it('renames, duplicates, archives and restores; lists each layout with its state', async () => {
    const made = await create()
    expect((await admin.patch(`/api/layouts/${made.id}`, { name: 'Hollin Bank (club room)' })).body.layout.name).toBe('Hollin Bank (club room)')
    const dup = await admin.post(`/api/layouts/${made.id}/duplicate`, { name: 'Hollin Bank spare' })
    expect(dup.status).toBe(201)
    expect(dup.body.slug).not.toBe(made.slug)
    expect((await admin.patch(`/api/layouts/${made.id}`, { archived: true })).body.layout.archived).toBe(true)
    expect((await admin.get('/api/layouts')).body.layouts.map((l: { id: number }) => l.id)).not.toContain(made.id)
    let list = (await admin.get('/api/layouts?archived=1')).body.layouts
    const row = list.find((l: { id: number }) => l.id === made.id)
    expect(row).toMatchObject({ archived: true, blocks: 4, signals: 3, turnouts: 0, inUse: false, hasJournal: false, lastSavedBy: adminName })
    await admin.patch(`/api/layouts/${made.id}`, { archived: false })
    list = (await admin.get('/api/layouts')).body.layouts
    expect(list.find((l: { id: number }) => l.id === made.id).archived).toBe(false)
    const demo = list.find((l: { slug: string }) => l.slug === 'wrenfold')
    expect(demo.blocks).toBeGreaterThan(10)
  })

  it('deletes a layout with no journal; one with journal entries is only archived', async () => {
    const empty = await create()
    expect((await admin.request('DELETE', `/api/layouts/${empty.id}`)).status).toBe(200)
    expect((await admin.get(`/api/layouts/${empty.id}`)).status).toBe(404)
    const used = await create()
    await db.models.JournalEvent.create({ layoutId: used.id, sessionId: null, at: new Date(), type: 'detector', subject: 'D1', payload: { occupied: true }, userId: null })
    const refused = await admin.request('DELETE', `/api/layouts/${used.id}`)
    expect(refused.status).toBe(409)
    expect(refused.body.message).toMatch(/archive it instead/)
    expect((await admin.get(`/api/layouts/${used.id}`)).status).toBe(200)
    expect((await admin.get('/api/layouts')).body.layouts.find((l: { id: number }) => l.id === used.id).hasJournal).toBe(true)
  })
})

describe('layouts: versions', () => {
  it('saves versions with who, when and what changed; refuses a save based on an older version (409 naming who)', async () => {
    const made = await create()
    const def = (await admin.get(`/api/layouts/${made.id}`)).body.layout.definition
    def.blocks.push({ id: 'B5', name: 'Hollin top', lengthMm: 900, detectors: ['D5'] })
    def.links.push({ from: 'B4', to: 'B5' })
    def.diagram.blocks.B5 = { path: [[900, 200], [980, 200]] }
    def.diagram.width = 1100
    def.signals[0].name = 'Hollin home'
    const saved = await admin.request('PUT', `/api/layouts/${made.id}`, { definition: def, baseVersion: 1 })
    expect(saved.status, JSON.stringify(saved.body)).toBe(200)
    expect(saved.body.version).toBe(2)
    const versions = (await admin.get(`/api/layouts/${made.id}/versions`)).body.versions
    expect(versions.map((v: { version: number }) => v.version)).toEqual([2, 1])
    expect(versions[0]).toMatchObject({ author: adminName, current: true, valid: true, summary: { added: { blocks: 1, links: 1 }, changed: { signals: 1 }, settings: true } })

    const stale = await admin.request('PUT', `/api/layouts/${made.id}`, { definition: def, baseVersion: 1 })
    expect(stale.status).toBe(409)
    expect(stale.body.data).toMatchObject({ reason: 'newer-version', latestVersion: 2, savedBy: adminName })
    expect(stale.body.message).toContain(`${adminName} saved version 2`)
  })

  it('keeps a draft with errors without making it current; restores an old version as a new one', async () => {
    const made = await create()
    const broken = { ...(await admin.get(`/api/layouts/${made.id}`)).body.layout.definition, links: [{ from: 'B1', to: 'B7' }] }
    expect((await admin.request('PUT', `/api/layouts/${made.id}`, { definition: broken, baseVersion: 1 })).status).toBe(400)
    const draft = await admin.request('PUT', `/api/layouts/${made.id}`, { definition: broken, baseVersion: 1, draft: true })
    expect(draft.body).toEqual({ version: 2, current: false })
    const layout = (await admin.get(`/api/layouts/${made.id}`)).body.layout
    expect(layout).toMatchObject({ version: 1, latestVersion: 2 })
    expect((await admin.get(`/api/layouts/${made.id}/versions/2`)).body.version).toMatchObject({ valid: false, current: false })
    const restored = await admin.post(`/api/layouts/${made.id}/versions/1/restore`, { baseVersion: 2 })
    expect(restored.body).toEqual({ version: 3, current: true })
    expect((await admin.get(`/api/layouts/${made.id}`)).body.layout.version).toBe(3)
    expect((await admin.post(`/api/layouts/${made.id}/versions/2/restore`, { baseVersion: 3 })).status).toBe(400)
  })

  it('refuses to make a new version current while an operating session runs, with that reason', async () => {
    const made = await create()
    const session = await db.models.OperatingSession.create({ layoutId: made.id, name: 'Thursday running', startedAt: new Date(), startedBy: null })
    const def = (await admin.get(`/api/layouts/${made.id}`)).body.layout.definition
    def.blocks[0].name = 'Hollin bottom'
    const refused = await admin.request('PUT', `/api/layouts/${made.id}`, { definition: def, baseVersion: 1 })
    expect(refused.status).toBe(409)
    expect(refused.body.data.reason).toBe('session-running')
    expect(refused.body.message).toMatch(/operating session is running/)
    expect((await admin.get('/api/layouts')).body.layouts.find((l: { id: number }) => l.id === made.id).inUse).toBe(true)
    expect((await admin.patch(`/api/layouts/${made.id}`, { archived: true })).status).toBe(409)
    const draft = await admin.request('PUT', `/api/layouts/${made.id}`, { definition: def, baseVersion: 1, draft: true })
    expect(draft.status).toBe(200)
    await session.update({ endedAt: new Date() })
    expect((await admin.request('PUT', `/api/layouts/${made.id}`, { definition: def, baseVersion: 2 })).body).toEqual({ version: 3, current: true })
  })
})

describe('layouts: export and import', () => {
  it('exports the current version as a file and imports it back as a new layout that validates the same', async () => {
    const made = await create()
    const exported = await fetch(`${BASE_URL}/api/layouts/${made.id}/export`, { headers: { cookie: admin.cookieHeader } })
    expect(exported.status).toBe(200)
    expect(exported.headers.get('content-disposition')).toMatch(new RegExp(`^attachment; filename="${made.slug}-v1.json"$`))
    const text = await exported.text()
    // named .txt and sent as text/plain: the content decides
    const imported = await upload(admin, text, 'hollin.txt', 'text/plain')
    expect(imported.status, JSON.stringify(imported.body)).toBe(201)
    expect(imported.body.slug).not.toBe(made.slug)
    const again = (await admin.get(`/api/layouts/${imported.body.id}`)).body.layout.definition
    expect(again).toEqual(JSON.parse(text))
  })

  it.each([
    ['unknown-references.json', ['links[0].to', 'signals[0].protects']],
    ['bad-shape.json', ['schema', 'name', 'scale.ratio', 'blocks[0].id', 'blocks[0].lengthMm', 'signals[0].kind']],
    ['no-blocks.json', ['blocks']],
  ])('refuses %s with the paths of its errors and stores nothing', async (file, paths) => {
    const before = await tableCounts()
    const reply = await upload(admin, fixture(file))
    expect(reply.status).toBe(400)
    expect(reply.body.data.issues.map((i: { path: string }) => i.path)).toEqual(paths)
    expect(await tableCounts()).toEqual(before)
  })

  it('refuses a file that is not JSON, an empty one, one over 1 MB and a request without the file', async () => {
    const before = await tableCounts()
    const png = Buffer.from([0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A, 0, 0, 0, 13])
    expect((await upload(admin, png, 'layout.json')).body.data.issues[0]).toMatchObject({ path: 'file', message: expect.stringMatching(/not JSON/) })
    expect((await upload(admin, '')).status).toBe(400)
    const big = JSON.stringify({ ...lineLayout('Too big'), padding: 'x'.repeat(1024 * 1024) })
    expect((await upload(admin, big)).status).toBe(413)
    const noFile = await fetch(`${BASE_URL}/api/layouts/import`, { method: 'POST', body: new FormData(), headers: { cookie: admin.cookieHeader } })
    expect(noFile.status).toBe(400)
    const json = await admin.post('/api/layouts/import', lineLayout('As JSON body'))
    expect(json.status).toBe(400)
    expect(await tableCounts()).toEqual(before)
  })
})

describe('layouts: the live side follows saves', () => {
  it('a new layout runs at once; a saved version reaches its open panels as a fresh snapshot', async () => {
    const made = await create()
    const viewer = await signedIn('viewer')
    const panel = await LiveClient.open(viewer.cookieHeader)
    const first = await panel.subscribe(made.slug)
    expect(first.type).toBe('snapshot')
    if (first.type !== 'snapshot') return
    expect(first.definition.blocks).toHaveLength(4)
    const def = (await admin.get(`/api/layouts/${made.id}`)).body.layout.definition
    def.blocks[1].name = 'Hollin middle'
    def.signals.push({ id: 'S9', name: 'Hollin extra distant', kind: 'distant', from: 'B1', protects: 'B2' })
    def.diagram.signals.S9 = { at: [250, 175], facing: 'right' }
    const since = panel.messages.length
    expect((await admin.request('PUT', `/api/layouts/${made.id}`, { definition: def, baseVersion: 1 })).status).toBe(200)
    const fresh = await panel.next(m => m.type === 'snapshot', 5000, since)
    if (fresh.type !== 'snapshot') throw new Error('expected a snapshot')
    expect(fresh.definition.blocks[1]!.name).toBe('Hollin middle')
    expect(fresh.state.indications.S9).toBeDefined()
    panel.socket.close()
  })

  it('the fake layout drives a layout made through the API', async () => {
    const made = await create()
    const viewer = await signedIn('viewer')
    const panel = await LiveClient.open(viewer.cookieHeader)
    await panel.subscribe(made.slug)
    const occupied = panel.change(c => c.type === 'block' && c.block === 'B2' && c.occupied, 10_000)
    // the fake layout runs on the layout as the server has it (its export)
    const file = join(mkdtempSync(join(tmpdir(), 'blockbell-layout-')), `${made.slug}.json`)
    writeFileSync(file, JSON.stringify((await admin.get(`/api/layouts/${made.id}/export`)).body))
    const run = runFakeLayoutScript({
      layout: file,
      mqttUrl: process.env.BLOCKBELL_TEST_MQTT_URL ?? 'mqtt://127.0.0.1:18839', script: 'tests/fixtures/layouts/hollin-train.json', slug: made.slug,
      username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo',
    })
    expect(await run.exited).toBe(0)
    await occupied
    const snapshot = await panel.subscribe(made.slug)
    if (snapshot.type !== 'snapshot') throw new Error('expected a snapshot')
    expect(snapshot.state.occupied).toMatchObject({ B1: true, B2: true, B3: false })
    // S2 protects the occupied B2
    expect(snapshot.state.indications.S2!.aspect).toBe('danger')
    panel.socket.close()
  })
})
