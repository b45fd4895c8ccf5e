import { describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import type WebSocket from 'ws'
import { BASE_URL, DEMO, SessionClient, signedIn, unique } from '../support/http-client'
import { LiveClient, upgradeStatus } from '../support/live-client'

// Sessions end when they should, although their cookies stay validly sealed (OWASP ASVS 5.0 7.4.1, 7.4.2):
// a copy of a cookie taken before stops working on the API and on the live WebSocket.
await setup({ host: BASE_URL })

/** A client that holds the same cookie as `client` (a copy kept by someone else, or another tab). */
function copyOf(client: SessionClient): SessionClient {
  const copy = new SessionClient()
  for (const pair of client.cookieHeader.split('; ')) {
    const eq = pair.indexOf('=')
    ;(copy as unknown as { cookies: Map<string, string> }).cookies.set(pair.slice(0, eq), pair.slice(eq + 1))
  }
  return copy
}

function closed(socket: WebSocket, timeoutMs = 3000): Promise<{ code: number, reason: string }> {
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`the WebSocket was still open after ${timeoutMs} ms`)), timeoutMs)
    socket.once('close', (code, reason) => { clearTimeout(timer); resolve({ code, reason: String(reason) }) })
  })
}

async function newPerson(role: 'viewer' | 'signaller') {
  const admin = await signedIn('admin')
  const email = `session-${unique()}@fernhollow.example`
  const password = 'long-enough-password'
  const created = await admin.post('/api/users', { email, name: `Orrin Vale ${unique()}`, role, password })
  expect(created.status).toBe(201)
  const person = new SessionClient()
  expect((await person.signIn(email, password)).status).toBe(200)
  return { admin, person, id: created.body.person.id as number, email, password }
}

describe('ending sessions', () => {
  it('sign-out: a copy of the cookie kept from before works neither on the API nor on the WebSocket', async () => {
    const person = await signedIn('viewer')
    const kept = copyOf(person)
    const panel = await LiveClient.open(kept.cookieHeader)
    expect((await kept.get('/api/auth/me')).status).toBe(200)
    const panelClosed = closed(panel.socket)
    expect((await person.post('/api/auth/sign-out')).status).toBe(200)
    expect((await kept.get('/api/auth/me')).status).toBe(401)
    expect((await panelClosed).code).toBe(4001)
    expect(await upgradeStatus({ cookie: kept.cookieHeader, origin: BASE_URL })).toBe(401)
    // nuxt-auth-utils' own session route says signed out too.
    expect((await kept.get('/api/_auth/session')).body?.user).toBeUndefined()
    // Signing out one device leaves the account's other sessions alone.
    const other = await signedIn('viewer')
    const third = await signedIn('viewer')
    expect((await other.post('/api/auth/sign-out')).status).toBe(200)
    expect((await third.get('/api/auth/me')).status).toBe(200)
  })

  it('sign out everywhere ends every session of the account and closes its panels at once', async () => {
    const { person, email, password } = await newPerson('viewer')
    const tablet = new SessionClient()
    expect((await tablet.signIn(email, password)).status).toBe(200)
    const panel = await LiveClient.open(tablet.cookieHeader)
    await panel.subscribe('wrenfold')
    const panelClosed = closed(panel.socket)
    expect((await person.post('/api/auth/sign-out', { everywhere: true })).status).toBe(200)
    expect((await panelClosed).code).toBe(4001)
    const reply = await tablet.get('/api/auth/me')
    expect(reply.status).toBe(401)
    expect(reply.body.message).toMatch(/session has ended/)
    expect((await person.get('/api/auth/me')).status).toBe(401)
    // A new sign-in works at once.
    expect((await new SessionClient().signIn(email, password)).status).toBe(200)
  })

  it('a password change ends the other sessions and keeps the one that changed it', async () => {
    const { person, email, password } = await newPerson('viewer')
    const elsewhere = new SessionClient()
    expect((await elsewhere.signIn(email, password)).status).toBe(200)
    const before = copyOf(person)
    expect((await person.post('/api/auth/password', { currentPassword: password, newPassword: 'a-new-long-password' })).status).toBe(200)
    expect((await person.get('/api/auth/me')).status).toBe(200)
    expect((await elsewhere.get('/api/auth/me')).status).toBe(401)
    expect((await before.get('/api/auth/me')).status).toBe(401)
  })

  it('disabling an account closes its panel at once and releases the areas it held', async () => {
    const { admin, person, id } = await newPerson('signaller')
    const watcher = await LiveClient.as('admin')
    await watcher.command({ action: 'force-release', area: 'branch' })
    const panel = await LiveClient.open(person.cookieHeader)
    await panel.subscribe('wrenfold')
    expect(await panel.command({ action: 'take-area', area: 'branch' })).toMatchObject({ ok: true })
    await watcher.next(m => m.type === 'delta' && m.changes.some(c => c.type === 'areas' && c.areas.branch?.id === id))
    const panelClosed = closed(panel.socket)
    const released = watcher.change(c => c.type === 'areas' && c.areas.branch === null)
    expect((await admin.patch(`/api/users/${id}`, { disabled: true })).status).toBe(200)
    expect((await panelClosed).code).toBe(4001)
    await released
    const refused = await person.get('/api/auth/me')
    expect(refused.status).toBe(401)
    expect(refused.body.message).toMatch(/disabled/)
    watcher.close()
  })

  it('changing a role closes the account\'s panels at once; the next sign-in has the new role', async () => {
    const { admin, person, id, email, password } = await newPerson('signaller')
    const panel = await LiveClient.open(person.cookieHeader)
    await panel.subscribe('wrenfold')
    const panelClosed = closed(panel.socket)
    expect((await admin.patch(`/api/users/${id}`, { role: 'viewer' })).status).toBe(200)
    expect((await panelClosed).code).toBe(4001)
    expect((await person.get('/api/auth/me')).status).toBe(401)
    const again = new SessionClient()
    expect((await again.signIn(email, password)).body.user.role).toBe('viewer')
    const live = await LiveClient.open(again.cookieHeader)
    await live.subscribe('wrenfold')
    expect(await live.command({ action: 'take-area', area: 'main' })).toMatchObject({ ok: false, reason: expect.stringMatching(/signed in as a viewer/) })
    live.close()
  })

  it('a sign-in draws a new session id, even when the request still carries an ended cookie', async () => {
    const person = await signedIn('viewer')
    const ended = copyOf(person)
    expect((await person.post('/api/auth/sign-out')).status).toBe(200)
    // Signing in again from the client that still holds the ended cookie.
    expect((await ended.signIn(DEMO.viewer.email, DEMO.viewer.password)).status).toBe(200)
    expect((await ended.get('/api/auth/me')).status).toBe(200)
  })
})
