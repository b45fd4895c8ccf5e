import { describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import { BASE_URL, SessionClient, signedIn, unique } from '../support/http-client'

await setup({ host: BASE_URL })

const newPerson = (role = 'signaller') => ({
  email: `person-${unique()}@fernhollow.example`, name: 'Orla Fenmoor', role, password: 'a-good-password',
})

describe('people (admin)', () => {
  it('lists people without their password hashes', async () => {
    const admin = await signedIn('admin')
    const reply = await admin.get('/api/users')
    expect(reply.status).toBe(200)
    expect(reply.body.people.length).toBeGreaterThanOrEqual(4)
    expect(JSON.stringify(reply.body)).not.toMatch(/passwordHash|scrypt/)
  })

  it('creates a person with a role, who can then sign in with that role', async () => {
    const admin = await signedIn('admin')
    const body = newPerson('viewer')
    const created = await admin.post('/api/users', body)
    expect(created.status).toBe(201)
    expect(created.body.person).toMatchObject({ email: body.email, role: 'viewer', disabled: false })
    const person = new SessionClient()
    expect((await person.signIn(body.email, body.password)).body.user.role).toBe('viewer')
  })

  it('refuses a second account with the same e-mail address, naming the field', async () => {
    const admin = await signedIn('admin')
    const body = newPerson()
    expect((await admin.post('/api/users', body)).status).toBe(201)
    const again = await admin.post('/api/users', { ...body, email: body.email.toUpperCase() })
    expect(again.status).toBe(409)
    expect(again.body.message).toMatch(/^email: /)
  })

  it('changes a role: it ends the person\'s sessions, and the next sign-in has the new role', async () => {
    const admin = await signedIn('admin')
    const body = newPerson('viewer')
    const { body: { person: created } } = await admin.post('/api/users', body)
    const person = new SessionClient()
    await person.signIn(body.email, body.password)
    expect((await person.get('/api/users')).status).toBe(403)
    expect((await admin.patch(`/api/users/${created.id}`, { role: 'admin' })).body.person.role).toBe('admin')
    const ended = await person.get('/api/users')
    expect(ended.status).toBe(401)
    expect(ended.body.message).toMatch(/session has ended/)
    await person.signIn(body.email, body.password)
    expect((await person.get('/api/users')).status).toBe(200)
    expect((await admin.patch(`/api/users/${created.id}`, { role: 'viewer' })).status).toBe(200)
  })

  it('disables a person: their session stops working and they cannot sign in again', async () => {
    const admin = await signedIn('admin')
    const body = newPerson('signaller')
    const { body: { person: created } } = await admin.post('/api/users', body)
    const person = new SessionClient()
    await person.signIn(body.email, body.password)
    expect((await person.get('/api/auth/me')).status).toBe(200)
    expect((await admin.patch(`/api/users/${created.id}`, { disabled: true })).body.person.disabled).toBe(true)
    const refused = await person.get('/api/auth/me')
    expect(refused.status).toBe(401)
    expect(refused.body.message).toMatch(/disabled/)
    const again = await new SessionClient().signIn(body.email, body.password)
    expect(again.status).toBe(403)
    expect(again.body.message).toMatch(/disabled/)
    expect((await admin.patch(`/api/users/${created.id}`, { disabled: false })).status).toBe(200)
    expect((await new SessionClient().signIn(body.email, body.password)).status).toBe(200)
  })

  it('keeps the last active admin: neither demoted nor disabled', async () => {
    const admin = await signedIn('admin')
    const people = (await admin.get('/api/users')).body.people as { id: number, role: string, disabled: boolean }[]
    const activeAdmins = people.filter(p => p.role === 'admin' && !p.disabled)
    // Demote every other active admin first, leaving the demo admin as the last one.
    const me = (await admin.get('/api/auth/me')).body.user
    for (const other of activeAdmins.filter(p => p.id !== me.id)) await admin.patch(`/api/users/${other.id}`, { role: 'viewer' })
    const demote = await admin.patch(`/api/users/${me.id}`, { role: 'signaller' })
    expect(demote.status).toBe(409)
    expect(demote.body.message).toMatch(/last active admin/)
    const disable = await admin.patch(`/api/users/${me.id}`, { disabled: true })
    expect(disable.status).toBe(409)
    expect((await admin.get('/api/auth/me')).body.user.role).toBe('admin')
    // With a second admin, the change is allowed; then put everything back.
    const second = newPerson('admin')
    const { body: { person } } = await admin.post('/api/users', second)
    const secondAdmin = new SessionClient()
    await secondAdmin.signIn(second.email, second.password)
    expect((await admin.patch(`/api/users/${me.id}`, { role: 'signaller' })).status).toBe(200)
    // A changed role ends the account's sessions: the demo admin signs in again once restored.
    expect((await admin.get('/api/auth/me')).status).toBe(401)
    expect((await secondAdmin.patch(`/api/users/${me.id}`, { role: 'admin' })).status).toBe(200)
    expect((await (await signedIn('admin')).patch(`/api/users/${person.id}`, { disabled: true })).status).toBe(200)
  })
})

describe('bad input gets 400 naming the field, never 500', () => {
  const cases: [string, unknown, RegExp][] = [
    ['missing fields', {}, /^email: .*; name: .*; role: .*; password: /],
    ['over-long name', { ...newPerson(), name: 'x'.repeat(81) }, /^name: A name has at most 80 characters$/],
    ['over-long e-mail', { ...newPerson(), email: `${'x'.repeat(250)}@fernhollow.example` }, /^email: /],
    ['not an e-mail', { ...newPerson(), email: 'not-an-address' }, /^email: Enter a valid e-mail address$/],
    ['unknown role', { ...newPerson(), role: 'driver' }, /^role: Choose a role: viewer, signaller, admin$/],
    ['wrong type', { ...newPerson(), name: 42 }, /^name: Enter a name$/],
    ['short password', { ...newPerson(), password: 'short' }, /^password: A password has at least 10 characters$/],
    ['body is an array', [1, 2], /^\(body\): /],
  ]
  it.each(cases)('create person: %s', async (_label, body, message) => {
    const admin = await signedIn('admin')
    const reply = await admin.post('/api/users', body)
    expect(reply.status).toBe(400)
    expect(reply.body.message).toMatch(message)
    expect(reply.body.data.issues.length).toBeGreaterThan(0)
  })

  it('malformed JSON', async () => {
    const admin = await signedIn('admin')
    const reply = await admin.request('POST', '/api/users', '{"email": ', { 'content-type': 'application/json' })
    expect(reply.status).toBe(400)
  })

  it('a non-numeric id', async () => {
    const admin = await signedIn('admin')
    const reply = await admin.patch('/api/users/abc', { name: 'Someone' })
    expect(reply.status).toBe(400)
    expect(reply.body.message).toMatch(/^id: /)
  })

  it('an update with nothing to change', async () => {
    const admin = await signedIn('admin')
    const reply = await admin.patch('/api/users/1', {})
    expect(reply.status).toBe(400)
    expect(reply.body.message).toMatch(/at least one of name, role, disabled/)
  })

  it('sign-in with a wrong type', async () => {
    const reply = await new SessionClient().post('/api/auth/sign-in', { email: ['a'], password: 1 })
    expect(reply.status).toBe(400)
    expect(reply.body.message).toMatch(/^email: .*; password: /)
  })
})
