import { afterAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import { BASE_URL, SessionClient, signedIn, unique } from '../support/http-client'
import { linkIn, mailTo, waitForMail } from '../support/mail'
import { closeE2eDatabase, e2eQuery } from '../support/e2e-database'

await setup({ host: BASE_URL })
afterAll(closeE2eDatabase)

const tokenOf = (link: string) => link.slice(link.lastIndexOf('/') + 1)

async function newMember(password = 'old-password-1') {
  const admin = await signedIn('admin')
  const body = { email: `member-${unique()}@fernhollow.example`, name: 'Perrin Ashgrove', role: 'signaller', password }
  const reply = await admin.post('/api/users', body)
  expect(reply.status).toBe(201)
  return { ...body, id: reply.body.person.id as number }
}

async function resetLink(email: string): Promise<string> {
  const before = mailTo(email).length
  const reply = await new SessionClient().post('/api/auth/forgot', { email })
  expect(reply.status).toBe(202)
  const mail = await waitForMail(email, { count: before + 1, subject: /Reset your Blockbell password/ })
  return linkIn(mail.text, '/reset-password/')
}

describe('password reset', () => {
  it('answers the same for a known and an unknown address, and mails only the known one', async () => {
    const member = await newMember()
    const stranger = `stranger-${unique()}@fernhollow.example`
    const known = await new SessionClient().post('/api/auth/forgot', { email: member.email })
    const unknown = await new SessionClient().post('/api/auth/forgot', { email: stranger })
    expect(known.status).toBe(202)
    expect(unknown.status).toBe(202)
    expect(unknown.body).toEqual(known.body)
    const mail = await waitForMail(member.email)
    expect(mail.html).toContain('Choose a new password')
    expect(mail.text).toContain(`${BASE_URL}/reset-password/`)
    // The known address's mail has arrived; give the unknown one the same time and more: nothing.
    await new Promise(r => setTimeout(r, 500))
    expect(mailTo(stranger)).toEqual([])
    const outbox = (await (await signedIn('admin')).get('/api/outbox')).body as { to: string }[]
    expect(outbox.some(m => m.to === stranger)).toBe(false)
  })

  it('the link works once: new password in, old one out, a notice sent; the link refused afterwards', async () => {
    const member = await newMember()
    const link = await resetLink(member.email)
    const page = await fetch(link)
    expect(page.status).toBe(200)
    expect(await page.text()).toContain('Choose a new password')
    const token = tokenOf(link)
    const done = await new SessionClient().post('/api/auth/reset', { token, password: 'new-password-22' })
    expect(done.status, JSON.stringify(done.body)).toBe(200)
    expect((await new SessionClient().signIn(member.email, 'new-password-22')).status).toBe(200)
    expect((await new SessionClient().signIn(member.email, 'old-password-1')).status).toBe(401)
    const again = await new SessionClient().post('/api/auth/reset', { token, password: 'third-password-3' })
    expect(again.status).toBe(410)
    expect(again.body.message).toMatch(/already been used/)
    const notice = await waitForMail(member.email, { subject: /password was changed/ })
    expect(notice.text).toContain(`${BASE_URL}/sign-in`)
  })

  it('a newer reset uses up every older link of the account', async () => {
    const member = await newMember()
    const first = tokenOf(await resetLink(member.email))
    const second = tokenOf(await resetLink(member.email))
    expect((await new SessionClient().post('/api/auth/reset', { token: second, password: 'second-link-pass' })).status).toBe(200)
    expect((await new SessionClient().post('/api/auth/reset', { token: first, password: 'first-link-pass' })).status).toBe(410)
  })

  it('refuses the link after an hour', async () => {
    const member = await newMember()
    const token = tokenOf(await resetLink(member.email))
    const [row] = await e2eQuery<{ minutes: number }>(`SELECT EXTRACT(EPOCH FROM expires_at - created_at) / 60 AS minutes FROM password_resets WHERE user_id = :id`, { id: member.id })
    expect(Math.round(Number(row!.minutes))).toBe(60)
    await e2eQuery(`UPDATE password_resets SET expires_at = now() - interval '1 second' WHERE user_id = :id RETURNING id`, { id: member.id })
    const reply = await new SessionClient().post('/api/auth/reset', { token, password: 'too-late-pass' })
    expect(reply.status).toBe(410)
    expect(reply.body.message).toMatch(/expired/)
  })

  it('afterwards the old cookie is refused on the next request', async () => {
    const member = await newMember()
    const before = new SessionClient()
    expect((await before.signIn(member.email, 'old-password-1')).status).toBe(200)
    expect((await before.get('/api/auth/me')).status).toBe(200)
    const token = tokenOf(await resetLink(member.email))
    expect((await new SessionClient().post('/api/auth/reset', { token, password: 'after-reset-pass' })).status).toBe(200)
    expect((await before.get('/api/auth/me')).status).toBe(401)
  })

  it('throttles requests per address: the fourth within 15 minutes gets 429 with Retry-After', async () => {
    const email = `throttled-${unique()}@fernhollow.example`
    for (let i = 0; i < 3; i++) expect((await new SessionClient().post('/api/auth/forgot', { email })).status).toBe(202)
    const refused = await new SessionClient().post('/api/auth/forgot', { email: email.toUpperCase() })
    expect(refused.status).toBe(429)
    expect(Number(refused.headers.get('retry-after'))).toBeGreaterThan(800)
    expect(refused.body.message).toMatch(/Try again in 1[45] minutes/)
  })

  it('sends nothing to a disabled account (same answer)', async () => {
    const member = await newMember()
    const admin = await signedIn('admin')
    expect((await admin.patch(`/api/users/${member.id}`, { disabled: true })).status).toBe(200)
    const reply = await new SessionClient().post('/api/auth/forgot', { email: member.email })
    expect(reply.status).toBe(202)
    await new Promise(r => setTimeout(r, 500))
    expect(mailTo(member.email)).toEqual([])
  })

  it('answers bad input with 400 naming the field', async () => {
    const forgot = await new SessionClient().post('/api/auth/forgot', { email: 'not-an-address' })
    expect(forgot.status).toBe(400)
    expect(forgot.body.message).toBe('email: Enter a valid e-mail address')
    const reset = await new SessionClient().post('/api/auth/reset', { token: 'x'.repeat(43), password: 'short' })
    expect(reset.status).toBe(400)
    expect(reset.body.message).toBe('password: A password has at least 10 characters')
    expect((await new SessionClient().post('/api/auth/reset', { token: 'x'.repeat(43), password: 'long-enough-1' })).status).toBe(410)
  })
})
