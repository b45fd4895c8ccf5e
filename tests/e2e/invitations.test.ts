import { createHash } from 'node:crypto'
import { afterAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import { BASE_URL, DEMO, SessionClient, signedIn, unique } from '../support/http-client'
import { linkIn, mailTo, waitForMail } from '../support/mail'
import { closeE2eDatabase, e2eQuery } from '../support/e2e-database'

await setup({ host: BASE_URL })
afterAll(closeE2eDatabase)

const address = () => `invitee-${unique()}@fernhollow.example`
const tokenOf = (link: string) => link.slice(link.lastIndexOf('/') + 1)

async function invite(admin: SessionClient, email: string, role = 'signaller') {
  const reply = await admin.post('/api/invitations', { email, role })
  expect(reply.status, JSON.stringify(reply.body)).toBe(201)
  const mail = await waitForMail(email, { count: mailTo(email).length + 1 })
  return { id: reply.body.id as number, mail, token: tokenOf(linkIn(mail.text, '/invitation/')) }
}

describe('invitations', () => {
  it('arrive through SMTP with a text and an HTML part and a working link; accepting signs in with the invited role', async () => {
    const admin = await signedIn('admin')
    const email = address()
    const { id, mail, token } = await invite(admin, email, 'viewer')
    expect(id).toBeGreaterThan(0)
    expect(mail.subject).toBe('Your invitation to Blockbell')
    const link = linkIn(mail.text, '/invitation/')
    expect(link.startsWith(`${BASE_URL}/invitation/`)).toBe(true)
    expect(mail.html).toContain(`href="${link}"`)
    expect(mail.text).toMatch(/as a viewer/)
    // The link opens the page, and the page knows the invitation.
    const page = await fetch(link)
    expect(page.status).toBe(200)
    expect(await page.text()).toContain('Join Blockbell')
    const person = new SessionClient()
    expect((await person.post('/api/invitations/check', { token })).body.invitation).toMatchObject({ email, role: 'viewer' })
    const accepted = await person.post('/api/invitations/accept', { token, name: 'Tamsin Reedbank', password: 'reedbank-lamp-1' })
    expect(accepted.status, JSON.stringify(accepted.body)).toBe(200)
    expect((await person.get('/api/auth/me')).body.user).toMatchObject({ email, name: 'Tamsin Reedbank', role: 'viewer' })
    expect((await new SessionClient().signIn(email, 'reedbank-lamp-1')).status).toBe(200)
    const listed = (await admin.get('/api/users')).body.people.find((p: { email: string }) => p.email === email)
    expect(listed).toMatchObject({ role: 'viewer', disabled: false })
  })

  it('refuses the link a second time', async () => {
    const admin = await signedIn('admin')
    const { token } = await invite(admin, address())
    expect((await new SessionClient().post('/api/invitations/accept', { token, name: 'First Go', password: 'first-go-pass' })).status).toBe(200)
    const again = await new SessionClient().post('/api/invitations/accept', { token, name: 'Second Go', password: 'second-go-pass' })
    expect(again.status).toBe(410)
    expect(again.body.message).toMatch(/already been used/)
    expect((await new SessionClient().post('/api/invitations/check', { token })).status).toBe(410)
  })

  it('refuses the link after expiry (72 hours)', async () => {
    const admin = await signedIn('admin')
    const { id, token } = await invite(admin, address())
    const [row] = await e2eQuery<{ hours: number }>(`SELECT EXTRACT(EPOCH FROM expires_at - created_at) / 3600 AS hours FROM invitations WHERE id = :id`, { id })
    expect(Math.round(Number(row!.hours))).toBe(72)
    await e2eQuery(`UPDATE invitations SET expires_at = now() - interval '1 second' WHERE id = :id RETURNING id`, { id })
    const reply = await new SessionClient().post('/api/invitations/accept', { token, name: 'Too Late', password: 'too-late-pass' })
    expect(reply.status).toBe(410)
    expect(reply.body.message).toMatch(/expired/)
    const listed = (await admin.get('/api/invitations')).body.invitations.find((i: { id: number }) => i.id === id)
    expect(listed.expired).toBe(true)
  })

  it('refuses the link after revocation, and the People list no longer shows it', async () => {
    const admin = await signedIn('admin')
    const email = address()
    const { id, token } = await invite(admin, email, 'admin')
    expect((await admin.get('/api/invitations')).body.invitations.find((i: { id: number }) => i.id === id))
      .toMatchObject({ email, role: 'admin', invitedBy: 'Ada Wrenfield', expired: false, mailState: 'kept' })
    expect((await admin.request('DELETE', `/api/invitations/${id}`)).status).toBe(200)
    expect((await admin.request('DELETE', `/api/invitations/${id}`)).status).toBe(200)
    const reply = await new SessionClient().post('/api/invitations/accept', { token, name: 'Withdrawn', password: 'withdrawn-pass' })
    expect(reply.status).toBe(410)
    expect(reply.body.message).toMatch(/withdrawn/)
    expect((await admin.get('/api/invitations')).body.invitations.some((i: { id: number }) => i.id === id)).toBe(false)
  })

  it('inviting the same address again replaces the old link', async () => {
    const admin = await signedIn('admin')
    const email = address()
    const first = await invite(admin, email)
    const second = await invite(admin, email)
    expect((await new SessionClient().post('/api/invitations/check', { token: first.token })).status).toBe(410)
    expect((await new SessionClient().post('/api/invitations/accept', { token: second.token, name: 'Second Link', password: 'second-link-pass' })).status).toBe(200)
    expect((await admin.request('DELETE', `/api/invitations/${second.id}`)).status).toBe(409)
  })

  it('refuses an address that already has an account, naming the field', async () => {
    const admin = await signedIn('admin')
    const reply = await admin.post('/api/invitations', { email: DEMO.viewer.email.toUpperCase(), role: 'admin' })
    expect(reply.status).toBe(409)
    expect(reply.body.message).toMatch(/^email: .* already has an account/)
  })

  it('stores only a SHA-256 of the token', async () => {
    const admin = await signedIn('admin')
    const { id, token } = await invite(admin, address())
    const [row] = await e2eQuery<{ token_hash: string }>(`SELECT token_hash FROM invitations WHERE id = :id`, { id })
    // node:crypto as the reference for SHA-256 (FIPS 180-4).
    expect(row!.token_hash).toBe(createHash('sha256').update(token).digest('hex'))
    expect(row!.token_hash).not.toContain(token)
  })

  it('an inviter\'s name with HTML in it arrives escaped in the HTML part and as typed in the text part', async () => {
    const admin = await signedIn('admin')
    const name = '<script>alert(1)</script> & <b>Nell</b>'
    const creds = { email: `admin-${unique()}@fernhollow.example`, name, role: 'admin', password: 'nell-admin-pass' }
    expect((await admin.post('/api/users', creds)).status).toBe(201)
    const nell = new SessionClient()
    await nell.signIn(creds.email, creds.password)
    const { mail } = await invite(nell, address())
    expect(mail.html).not.toContain('<script>')
    expect(mail.html).not.toContain('<b>Nell')
    expect(mail.html).toContain('&lt;script&gt;alert(1)&lt;/script&gt; &amp; &lt;b&gt;Nell&lt;/b&gt;')
    expect(mail.text).toContain(`${name} has invited you`)
  })

  it('answers bad input with 400 naming the field', async () => {
    const admin = await signedIn('admin')
    expect((await admin.post('/api/invitations', { email: 'nope', role: 'driver' })).body.message).toMatch(/^email: .*; role: /)
    const accept = await new SessionClient().post('/api/invitations/accept', { token: 'short', name: '', password: 'x' })
    expect(accept.status).toBe(400)
    expect(accept.body.message).toMatch(/^token: .*; name: .*; password: /)
    const unknown = await new SessionClient().post('/api/invitations/accept', { token: 'x'.repeat(43), name: 'Nobody', password: 'nobody-pass-1' })
    expect(unknown.status).toBe(410)
    expect((await admin.request('DELETE', '/api/invitations/abc')).status).toBe(400)
  })
})
