import { describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import { BASE_URL, signedIn, unique } from '../support/http-client'
import { waitForMail } from '../support/mail'

await setup({ host: BASE_URL })

interface Row { id: number, to: string, subject: string, state: string, text: string, html: string, at: string, attempts: number, lastError: string | null }

async function until<T>(read: () => Promise<T>, ok: (value: T) => boolean, timeoutMs = 15_000): Promise<T> {
  const deadline = Date.now() + timeoutMs
  for (;;) {
    const value = await read()
    if (ok(value)) return value
    if (Date.now() > deadline) throw new Error(`not reached in time: ${JSON.stringify(value).slice(0, 400)}`)
    await new Promise(r => setTimeout(r, 100))
  }
}

describe('outbox (admin)', () => {
  it('lists messages newest first with both parts; one-time links appear in the text as full URLs', async () => {
    const admin = await signedIn('admin')
    const first = `outbox-a-${unique()}@fernhollow.example`
    const second = `outbox-b-${unique()}@fernhollow.example`
    await admin.post('/api/invitations', { email: first, role: 'viewer' })
    await admin.post('/api/invitations', { email: second, role: 'viewer' })
    await waitForMail(second)
    const rows = await until(() => admin.get<Row[]>('/api/outbox').then(r => r.body), b => b.find(m => m.to === second)?.state === 'kept')
    const a = rows.findIndex(m => m.to === first)
    const b = rows.findIndex(m => m.to === second)
    expect(b).toBeLessThan(a)
    for (let i = 1; i < rows.length; i++) expect(rows[i - 1]!.at >= rows[i]!.at).toBe(true)
    expect(Object.keys(rows[b]!)).toEqual(expect.arrayContaining(['id', 'to', 'subject', 'state', 'text', 'html', 'at']))
    expect(rows[b]!.text).toMatch(new RegExp(`${BASE_URL}/invitation/[A-Za-z0-9_-]{43}`))
    expect(rows[b]!.html).toContain('<a href=')
  })

  it('a send the mail server refuses is retried, then shown as failed (and on the invitation)', async () => {
    const admin = await signedIn('admin')
    // The fake mail server refuses .invalid addresses with 451 (try again later).
    const email = `refused-${unique()}@fernhollow.invalid`
    const created = await admin.post('/api/invitations', { email, role: 'viewer' })
    expect(created.status).toBe(201)
    const rows = await until(() => admin.get<Row[]>('/api/outbox').then(r => r.body), list => list.find(m => m.to === email)?.state === 'failed')
    const failed = rows.find(m => m.to === email)!
    expect(failed.attempts).toBe(3)
    expect(failed.lastError).toMatch(/451|\.invalid/)
    const invitation = (await admin.get('/api/invitations')).body.invitations.find((i: { email: string }) => i.email === email)
    expect(invitation.mailState).toBe('failed')
    // Sent again: retried again, and failed again (the server still refuses).
    const retried = await admin.post(`/api/outbox/${failed.id}/retry`)
    expect(retried.status).toBe(200)
    expect(retried.body.message.state).toMatch(/queued|failed/)
    const after = await until(() => admin.get<Row[]>('/api/outbox').then(r => r.body.find(m => m.id === failed.id)!), m => m.state === 'failed' && m.attempts === 3)
    expect(after.lastError).toBeTruthy()
  })

  it('a retry of an unknown message is a 404, a bad id a 400', async () => {
    const admin = await signedIn('admin')
    expect((await admin.post('/api/outbox/999999/retry')).status).toBe(404)
    expect((await admin.post('/api/outbox/x/retry')).status).toBe(400)
  })
})
