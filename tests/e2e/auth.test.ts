import { describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import { BASE_URL, DEMO, SessionClient, signedIn, unique } from '../support/http-client'

// Runs against the built server started by scripts/test.sh (npm test).
await setup({ host: BASE_URL })

describe('sign-in', () => {
  it('signs in with the right password and shows who is signed in', async () => {
    const client = new SessionClient()
    const reply = await client.signIn(DEMO.signaller.email, DEMO.signaller.password)
    expect(reply.status).toBe(200)
    expect(reply.body.user).toMatchObject({ email: DEMO.signaller.email, role: 'signaller' })
    expect(reply.body.user.passwordHash).toBeUndefined()
    expect(client.cookieHeader).toContain('blockbell-session=')
    const me = await client.get('/api/auth/me')
    expect(me.status).toBe(200)
    expect(me.body.user.email).toBe(DEMO.signaller.email)
  })

  it('accepts the e-mail address in any case and with spaces around it', async () => {
    const reply = await new SessionClient().signIn(`  ${DEMO.viewer.email.toUpperCase()} `, DEMO.viewer.password)
    expect(reply.status).toBe(200)
  })

  it('refuses a wrong password with a clear message and no session', async () => {
    const client = new SessionClient()
    const reply = await client.signIn(DEMO.viewer.email, 'not-the-password')
    expect(reply.status).toBe(401)
    expect(reply.body.message).toBe('Wrong e-mail address or password.')
    expect((await client.get('/api/auth/me')).status).toBe(401)
  })

  it('gives the same answer for an unknown account as for a wrong password', async () => {
    const reply = await new SessionClient().signIn(`nobody-${unique()}@fernhollow.example`, 'whatever-password')
    expect(reply.status).toBe(401)
    expect(reply.body.message).toBe('Wrong e-mail address or password.')
  })

  it('throttles repeated failures for one account with 429, a Retry-After and a clear message', async () => {
    const email = `throttled-${unique()}@fernhollow.example`
    const client = new SessionClient()
    for (let i = 0; i < 5; i++) expect((await client.signIn(email, 'wrong-password-xx')).status).toBe(401)
    const blocked = await client.signIn(email, 'wrong-password-xx')
    expect(blocked.status).toBe(429)
    expect(blocked.body.message).toMatch(/^Too many failed sign-ins\. Try again in \d+ minutes?\.$/)
    expect(Number(blocked.headers.get('retry-after'))).toBeGreaterThan(0)
    // Other accounts are not locked out by it.
    expect((await new SessionClient().signIn(DEMO.signaller2.email, DEMO.signaller2.password)).status).toBe(200)
  })

  it('signs out: the session no longer works', async () => {
    const client = await signedIn('viewer')
    expect((await client.post('/api/auth/sign-out')).status).toBe(200)
    expect((await client.get('/api/auth/me')).status).toBe(401)
  })

  it('changes the own password after checking the current one', async () => {
    const admin = await signedIn('admin')
    const email = `pw-${unique()}@fernhollow.example`
    expect((await admin.post('/api/users', { email, name: 'Pella Quist', role: 'viewer', password: 'first-password-1' })).status).toBe(201)
    const person = new SessionClient()
    expect((await person.signIn(email, 'first-password-1')).status).toBe(200)
    const wrong = await person.post('/api/auth/password', { currentPassword: 'not-it-at-all', newPassword: 'second-password-2' })
    expect(wrong.status).toBe(400)
    expect(wrong.body.message).toMatch(/^currentPassword:/)
    const short = await person.post('/api/auth/password', { currentPassword: 'first-password-1', newPassword: 'short' })
    expect(short.status).toBe(400)
    expect(short.body.message).toMatch(/^newPassword: A password has at least 10 characters/)
    expect((await person.post('/api/auth/password', { currentPassword: 'first-password-1', newPassword: 'second-password-2' })).status).toBe(200)
    expect((await new SessionClient().signIn(email, 'first-password-1')).status).toBe(401)
    expect((await new SessionClient().signIn(email, 'second-password-2')).status).toBe(200)
  })
})

describe('pages', () => {
  it('sends a signed-out visitor to sign-in, keeping where they were going', async () => {
    const reply = await new SessionClient().request('GET', '/people', undefined, { accept: 'text/html' })
    expect(reply.status).toBe(302)
    expect(reply.headers.get('location')).toBe('/sign-in?redirect=/people')
  })

  it('serves the sign-in page to a signed-out visitor', async () => {
    const reply = await new SessionClient().request('GET', '/sign-in', undefined, { accept: 'text/html' })
    expect(reply.status).toBe(200)
    expect(String(reply.body)).toContain('E-mail address')
  })

  it('refuses the People screen to a signaller', async () => {
    const signaller = await signedIn('signaller')
    const reply = await signaller.request('GET', '/people', undefined, { accept: 'text/html' })
    expect(reply.status).toBe(403)
  })

  it('renders the Sessions screen for a viewer, built (no "not built" notice)', async () => {
    const viewer = await signedIn('viewer')
    const reply = await viewer.request('GET', '/sessions', undefined, { accept: 'text/html' })
    expect(reply.status).toBe(200)
    expect(String(reply.body)).toContain('data-test="session-filters"')
    expect(String(reply.body)).not.toContain('Not built yet.')
  })
})
