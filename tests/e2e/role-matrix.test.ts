import { readdirSync } from 'node:fs'
import { join, relative } from 'node:path'
import { beforeAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import { BASE_URL, SessionClient, signedIn } from '../support/http-client'

await setup({ host: BASE_URL })

type Who = 'anonymous' | 'viewer' | 'signaller' | 'admin'
interface RouteCase { file: string, method: string, path: string, body?: unknown, expect: Record<Who, number> }

// Every API route x every role, signed out included. Bodies are chosen so nothing changes: a route that lets
// the caller through answers 400 (invalid body) or 404 (unknown id), one that does not answers 401 or 403.
const ROUTES: RouteCase[] = [
  { file: 'health.get.ts', method: 'GET', path: '/api/health', expect: { anonymous: 200, viewer: 200, signaller: 200, admin: 200 } },
  { file: 'auth/sign-in.post.ts', method: 'POST', path: '/api/auth/sign-in', body: {}, expect: { anonymous: 400, viewer: 400, signaller: 400, admin: 400 } },
  { file: 'auth/sign-out.post.ts', method: 'POST', path: '/api/auth/sign-out', expect: { anonymous: 200, viewer: 200, signaller: 200, admin: 200 } },
  { file: 'auth/me.get.ts', method: 'GET', path: '/api/auth/me', expect: { anonymous: 401, viewer: 200, signaller: 200, admin: 200 } },
  { file: 'auth/password.post.ts', method: 'POST', path: '/api/auth/password', body: {}, expect: { anonymous: 401, viewer: 400, signaller: 400, admin: 400 } },
  { file: 'users/index.get.ts', method: 'GET', path: '/api/users', expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 200 } },
  { file: 'users/index.post.ts', method: 'POST', path: '/api/users', body: {}, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 400 } },
  { file: 'users/[id].patch.ts', method: 'PATCH', path: '/api/users/999999', body: { name: 'Nobody' }, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'devices/index.get.ts', method: 'GET', path: '/api/devices', expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 200 } },
  { file: 'devices/index.post.ts', method: 'POST', path: '/api/devices', body: {}, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 400 } },
  { file: 'devices/[id].patch.ts', method: 'PATCH', path: '/api/devices/999999', body: { disabled: true }, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'journal/set-aside.get.ts', method: 'GET', path: '/api/journal/set-aside', expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 200 } },
  { file: 'layouts/index.get.ts', method: 'GET', path: '/api/layouts', expect: { anonymous: 401, viewer: 200, signaller: 200, admin: 200 } },
  { file: 'sessions/index.get.ts', method: 'GET', path: '/api/sessions?limit=1', expect: { anonymous: 401, viewer: 200, signaller: 200, admin: 200 } },
  { file: 'sessions/index.post.ts', method: 'POST', path: '/api/sessions', body: {}, expect: { anonymous: 401, viewer: 403, signaller: 400, admin: 400 } },
  { file: 'sessions/[id].get.ts', method: 'GET', path: '/api/sessions/999999', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'sessions/[id].delete.ts', method: 'DELETE', path: '/api/sessions/999999', body: { confirm: 'x' }, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'sessions/[id]/end.post.ts', method: 'POST', path: '/api/sessions/999999/end', expect: { anonymous: 401, viewer: 403, signaller: 404, admin: 404 } },
  { file: 'sessions/[id]/delete-preview.get.ts', method: 'GET', path: '/api/sessions/999999/delete-preview', expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'sessions/[id]/events.get.ts', method: 'GET', path: '/api/sessions/999999/events', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'sessions/[id]/events.csv.get.ts', method: 'GET', path: '/api/sessions/999999/events.csv', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'sessions/[id]/replay.get.ts', method: 'GET', path: '/api/sessions/999999/replay?at=1', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'sessions/[id]/graph.get.ts', method: 'GET', path: '/api/sessions/999999/graph?route=UM1', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'auth/forgot.post.ts', method: 'POST', path: '/api/auth/forgot', body: {}, expect: { anonymous: 400, viewer: 400, signaller: 400, admin: 400 } },
  { file: 'auth/reset.post.ts', method: 'POST', path: '/api/auth/reset', body: {}, expect: { anonymous: 400, viewer: 400, signaller: 400, admin: 400 } },
  { file: 'invitations/index.get.ts', method: 'GET', path: '/api/invitations', expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 200 } },
  { file: 'invitations/index.post.ts', method: 'POST', path: '/api/invitations', body: {}, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 400 } },
  { file: 'invitations/[id].delete.ts', method: 'DELETE', path: '/api/invitations/999999', expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'invitations/check.post.ts', method: 'POST', path: '/api/invitations/check', body: {}, expect: { anonymous: 400, viewer: 400, signaller: 400, admin: 400 } },
  { file: 'invitations/accept.post.ts', method: 'POST', path: '/api/invitations/accept', body: {}, expect: { anonymous: 400, viewer: 400, signaller: 400, admin: 400 } },
  { file: 'outbox/index.get.ts', method: 'GET', path: '/api/outbox', expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 200 } },
  { file: 'outbox/[id]/retry.post.ts', method: 'POST', path: '/api/outbox/999999/retry', expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'layouts/[id].get.ts', method: 'GET', path: '/api/layouts/999999', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'layouts/index.post.ts', method: 'POST', path: '/api/layouts', body: {}, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 400 } },
  { file: 'layouts/[id].put.ts', method: 'PUT', path: '/api/layouts/999999', body: { definition: {}, baseVersion: 1, draft: true }, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'layouts/[id].patch.ts', method: 'PATCH', path: '/api/layouts/999999', body: { name: 'Nowhere' }, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'layouts/[id].delete.ts', method: 'DELETE', path: '/api/layouts/999999', expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'layouts/[id]/duplicate.post.ts', method: 'POST', path: '/api/layouts/999999/duplicate', body: { name: 'Nowhere' }, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'layouts/[id]/versions/index.get.ts', method: 'GET', path: '/api/layouts/999999/versions', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'layouts/[id]/versions/[version].get.ts', method: 'GET', path: '/api/layouts/999999/versions/1', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'layouts/[id]/versions/[version]/restore.post.ts', method: 'POST', path: '/api/layouts/999999/versions/1/restore', body: { baseVersion: 1 }, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'layouts/[id]/export.get.ts', method: 'GET', path: '/api/layouts/999999/export', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'layouts/import.post.ts', method: 'POST', path: '/api/layouts/import', body: {}, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 400 } },
  { file: 'layouts/[id]/wiring.get.ts', method: 'GET', path: '/api/layouts/999999/wiring', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'layouts/[id]/wiring.put.ts', method: 'PUT', path: '/api/layouts/999999/wiring', body: { kind: 'detector', item: 'D1', deviceId: null }, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'layouts/[id]/wiring.csv.get.ts', method: 'GET', path: '/api/layouts/999999/wiring.csv', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'layouts/[id]/maintenance.get.ts', method: 'GET', path: '/api/layouts/999999/maintenance', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'layouts/[id]/maintenance/thresholds.put.ts', method: 'PUT', path: '/api/layouts/999999/maintenance/thresholds', body: {}, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 400 } },
  { file: 'layouts/[id]/cleanings.get.ts', method: 'GET', path: '/api/layouts/999999/cleanings', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'layouts/[id]/stock.get.ts', method: 'GET', path: '/api/layouts/999999/stock', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'layouts/[id]/stock.post.ts', method: 'POST', path: '/api/layouts/999999/stock', body: {}, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 400 } },
  { file: 'stock/[id].put.ts', method: 'PUT', path: '/api/stock/999999', body: { name: 'Nowhere', serviceHours: null, serviceKm: null }, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'stock/[id].delete.ts', method: 'DELETE', path: '/api/stock/999999', expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'stock/[id]/description.put.ts', method: 'PUT', path: '/api/stock/999999/description', body: { description: '1A01' }, expect: { anonymous: 401, viewer: 403, signaller: 404, admin: 404 } },
  { file: 'stock/[id]/services.post.ts', method: 'POST', path: '/api/stock/999999/services', body: {}, expect: { anonymous: 401, viewer: 403, signaller: 404, admin: 404 } },
  { file: 'stock/[id]/services.get.ts', method: 'GET', path: '/api/stock/999999/services', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'layouts/[id]/tasks.get.ts', method: 'GET', path: '/api/layouts/999999/tasks', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'layouts/[id]/tasks.post.ts', method: 'POST', path: '/api/layouts/999999/tasks', body: {}, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 400 } },
  { file: 'tasks/[id].put.ts', method: 'PUT', path: '/api/tasks/999999', body: { title: 'Nothing', repeatDays: 7 }, expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'tasks/[id].delete.ts', method: 'DELETE', path: '/api/tasks/999999', expect: { anonymous: 401, viewer: 403, signaller: 403, admin: 404 } },
  { file: 'tasks/[id]/done.post.ts', method: 'POST', path: '/api/tasks/999999/done', body: {}, expect: { anonymous: 401, viewer: 403, signaller: 404, admin: 404 } },
  { file: 'tasks/[id]/log.get.ts', method: 'GET', path: '/api/tasks/999999/log', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'maintenance/due.get.ts', method: 'GET', path: '/api/maintenance/due', expect: { anonymous: 401, viewer: 200, signaller: 200, admin: 200 } },
  { file: 'uploads/index.post.ts', method: 'POST', path: '/api/uploads', body: {}, expect: { anonymous: 401, viewer: 403, signaller: 400, admin: 400 } },
  { file: 'uploads/[id].get.ts', method: 'GET', path: '/api/uploads/00000000-0000-4000-8000-000000000000', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'uploads/[id]/thumbnail.get.ts', method: 'GET', path: '/api/uploads/00000000-0000-4000-8000-000000000000/thumbnail', expect: { anonymous: 401, viewer: 404, signaller: 404, admin: 404 } },
  { file: 'layouts/[id]/cleanings.post.ts', method: 'POST', path: '/api/layouts/999999/cleanings', body: {}, expect: { anonymous: 401, viewer: 403, signaller: 400, admin: 400 } },
]

function apiRouteFiles(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap(entry =>
    entry.isDirectory() ? apiRouteFiles(join(dir, entry.name)) : [join(dir, entry.name)])
}

describe('role matrix', () => {
  const clients = {} as Record<Who, SessionClient>
  beforeAll(async () => {
    clients.anonymous = new SessionClient()
    clients.viewer = await signedIn('viewer')
    clients.signaller = await signedIn('signaller')
    clients.admin = await signedIn('admin')
  })

  it('covers every file under server/api', () => {
    const root = join(process.cwd(), 'server/api')
    const files = apiRouteFiles(root).map(f => relative(root, f)).sort()
    expect(files).toEqual(ROUTES.map(r => r.file).sort())
  })

  const rows = ROUTES.flatMap(route => (Object.keys(route.expect) as Who[])
    .filter(who => !route.path.includes('sign-out') || who === 'anonymous')
    .map(who => ({ ...route, who, status: route.expect[who] })))

  it.each(rows)('$method $path as $who -> $status', async ({ method, path, body, who, status }) => {
    const reply = await clients[who].request(method, path, body)
    expect(reply.status, JSON.stringify(reply.body)).toBe(status)
  })

  // Cross-site request forgery: a page on another site (another port, a sibling host) posts a form with the
  // victim's valid cookie. Every state-changing route, plus nuxt-auth-utils' own DELETE /api/_auth/session,
  // must refuse it before it does anything (OWASP ASVS 5.0 V3.5).
  const STATE_CHANGING = [
    ...ROUTES.filter(r => r.method !== 'GET').map(r => ({ method: r.method, path: r.path, body: r.body })),
    { method: 'DELETE', path: '/api/_auth/session', body: undefined },
  ]
  const FOREIGN = [
    { origin: 'http://127.0.0.1:1', site: 'same-site', what: 'another port' },
    { origin: 'http://attacker.fernhollow.example', site: 'cross-site', what: 'another site' },
    { origin: 'null', site: 'cross-site', what: 'a sandboxed frame' },
  ]

  it.each(STATE_CHANGING.flatMap(route => FOREIGN.map(foreign => ({ ...route, ...foreign }))))(
    'refuses a form $method $path from $what with a valid cookie', async ({ method, path, origin, site }) => {
      const admin = await signedIn('admin')
      const reply = await admin.request(method, path, 'name=Mallory&role=admin&everywhere=true', {
        'content-type': 'application/x-www-form-urlencoded', origin, 'sec-fetch-site': site,
      })
      expect(reply.status, JSON.stringify(reply.body)).toBe(403)
      expect(reply.body.message).toMatch(/came from another site/)
      // Nothing happened: the cookie still works.
      expect((await admin.get('/api/auth/me')).status).toBe(200)
    })

  it.each(STATE_CHANGING.filter(r => r.body !== undefined || r.method === 'POST'))(
    'refuses a form body on $method $path even from this site (415, JSON only)', async ({ method, path }) => {
      const admin = await signedIn('admin')
      const upload = path === '/api/layouts/import' || path === '/api/uploads' // a file upload: multipart is its body, refused cross-site only
      for (const type of ['application/x-www-form-urlencoded', 'multipart/form-data; boundary=x', 'text/plain']) {
        if (upload && type.startsWith('multipart/')) continue
        const reply = await admin.request(method, path, 'everywhere=true', { 'content-type': type, 'sec-fetch-site': 'same-origin' })
        expect(reply.status, `${type}: ${JSON.stringify(reply.body)}`).toBe(415)
        expect(reply.body.message).toBe('The request body must be JSON: send it with Content-Type: application/json.')
      }
      expect((await admin.get('/api/auth/me')).status).toBe(200)
    })

  it.each(FOREIGN)('refuses a multipart file upload from $what, and takes one from this site', async ({ origin, site }) => {
    const admin = await signedIn('admin')
    const form = '--x\r\nContent-Disposition: form-data; name="file"; filename="a.json"\r\nContent-Type: application/json\r\n\r\n{}\r\n--x--\r\n'
    const foreign = await admin.request('POST', '/api/layouts/import', form, { 'content-type': 'multipart/form-data; boundary=x', origin, 'sec-fetch-site': site })
    expect(foreign.status, JSON.stringify(foreign.body)).toBe(403)
    const own = await admin.request('POST', '/api/layouts/import', form, { 'content-type': 'multipart/form-data; boundary=x', 'origin': BASE_URL, 'sec-fetch-site': 'same-origin' })
    expect(own.status, JSON.stringify(own.body)).toBe(400) // read and refused for its content ({} is no layout)
  })

  it('refuses JSON from a foreign Origin too, and takes it from this site (as the browser sends it)', async () => {
    const admin = await signedIn('admin')
    const foreign = await admin.request('POST', '/api/devices', {}, { origin: 'http://attacker.fernhollow.example' })
    expect(foreign.status).toBe(403)
    const own = await admin.request('POST', '/api/devices', {}, { 'origin': BASE_URL, 'sec-fetch-site': 'same-origin' })
    expect(own.status).toBe(400)
    const fetchSiteOnly = await admin.request('POST', '/api/devices', {}, { 'sec-fetch-site': 'same-origin' })
    expect(fetchSiteOnly.status).toBe(400)
  })

  it('sign-out ends the session of every role', async () => {
    for (const role of ['viewer', 'signaller', 'admin'] as const) {
      const client = await signedIn(role)
      expect((await client.post('/api/auth/sign-out')).status).toBe(200)
      expect((await client.get('/api/auth/me')).status).toBe(401)
    }
  })

  it('a real layout id answers 200 to every signed-in role', async () => {
    const list = await clients.viewer.get('/api/layouts')
    const id = list.body.layouts[0].id
    for (const who of ['viewer', 'signaller', 'admin'] as const) {
      const reply = await clients[who].get(`/api/layouts/${id}`)
      expect(reply.status).toBe(200)
      expect(reply.body.layout.definition.blocks.length).toBeGreaterThan(0)
    }
  })
})
