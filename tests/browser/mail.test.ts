import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { DEMO, unique } from '../support/http-client'
import { openBrowser, screenshot, signInThroughForm, type BrowserSession } from '../support/browser'
import { linkIn, waitForMail } from '../support/mail'
import { sessionSummaryMail } from '../../server/mail/templates'

// Console errors and hydration warnings fail these tests (watched on every page opened here).
const problems: string[] = []
function watch(page: Page) {
  page.on('console', (m) => {
    if (m.type() === 'error' || /hydration/i.test(m.text())) problems.push(`${page.url()}: ${m.text()}`)
  })
  page.on('pageerror', e => problems.push(`${page.url()}: ${e.message}`))
}

/** Renders a message's HTML part in chromium (scripts off, as in a mail program) and screenshots it. */
async function renderMail(session: BrowserSession, htmlPart: string, name: string) {
  const page = await session.context.newPage()
  await page.setViewportSize({ width: 640, height: 700 })
  await page.setContent(htmlPart, { waitUntil: 'load' })
  const path = await screenshot(page, name)
  const text = await page.locator('body').innerText()
  await page.close()
  return { path, text }
}

describe('e-mail in a real browser (Debian chromium)', () => {
  let admin: BrowserSession
  let invitee: BrowserSession
  let member: BrowserSession
  const inviteeEmail = `browser-invitee-${unique()}@fernhollow.example`

  beforeAll(async () => {
    admin = await openBrowser({ width: 1280, height: 800 })
    invitee = await openBrowser({ width: 820, height: 1000 })
    member = await openBrowser({ width: 820, height: 1000 })
    for (const s of [admin, invitee, member]) watch(s.page)
  })
  afterAll(async () => {
    await admin?.close()
    await invitee?.close()
    await member?.close()
  })

  it('invite -> accept -> signed in', async () => {
    const { page } = admin
    await signInThroughForm(page, DEMO.admin.email, DEMO.admin.password)
    await page.waitForURL('**/panel')
    await page.goto('/people')
    const form = page.getByTestId('invite-person')
    await form.getByLabel('E-mail address').fill(inviteeEmail)
    await form.getByLabel('Role').selectOption('signaller')
    await form.getByRole('button', { name: 'Send invitation' }).click()
    await expect.poll(() => form.getByRole('status').textContent()).toContain(`Invitation on its way to ${inviteeEmail}`)
    await expect.poll(() => page.getByTestId(`invitation-${inviteeEmail}`).count()).toBe(1)
    await screenshot(page, 'people-invitations-1280x800')

    const mail = await waitForMail(inviteeEmail)
    const rendered = await renderMail(admin, mail.html, 'mail-invitation')
    expect(rendered.text).toContain('Accept the invitation')
    expect(rendered.text).toContain('Ada Wrenfield has invited you')

    const link = linkIn(mail.text, '/invitation/')
    const p = invitee.page
    await p.goto(link)
    await expect.poll(() => p.textContent('body')).toContain(`with the address ${inviteeEmail}`)
    await screenshot(p, 'invitation-page-820x1000')
    await p.getByLabel('Your name').fill('Corin Wheatley')
    await p.getByLabel(/New password/).fill('wheatley-lamp-1')
    await p.getByLabel('The same password again').fill('wheatley-lamp-2')
    await expect.poll(() => p.textContent('body')).toContain('The two passwords differ')
    expect(await p.getByRole('button', { name: 'Join and sign in' }).isDisabled()).toBe(true)
    await p.getByLabel('The same password again').fill('wheatley-lamp-1')
    await p.getByRole('button', { name: 'Join and sign in' }).click()
    await p.waitForURL('**/panel')
    await expect.poll(() => p.getByTestId('account-link').textContent()).toContain('Corin Wheatley')
    expect(await p.getByTestId('account-link').textContent()).toContain('signaller')

    // Opened again, the link is refused on the page.
    await p.goto(link)
    await expect.poll(() => p.getByTestId('invitation-refused').textContent()).toContain('already been used')
  })

  it('the Outbox shows the messages, the HTML in a sandboxed frame with no scripts', async () => {
    const { page } = admin
    await page.getByRole('link', { name: 'Outbox' }).click()
    await page.waitForURL('**/outbox')
    const first = page.getByTestId('outbox-list').locator('li').first()
    await expect.poll(() => first.textContent()).toContain(inviteeEmail)
    await first.getByRole('button', { name: /Your invitation to Blockbell/ }).click()
    const frame = first.getByTestId('outbox-html')
    expect(await frame.getAttribute('sandbox')).toBe('')
    expect(await frame.getAttribute('srcdoc')).toContain('Accept the invitation')
    await expect.poll(() => page.frameLocator('[data-test="outbox-html"]').locator('h1').textContent()).toBe('You are invited to Blockbell')
    await screenshot(page, 'outbox-1280x800')
    await first.getByRole('button', { name: 'Plain text' }).click()
    await expect.poll(() => first.getByTestId('outbox-text').textContent()).toContain('/invitation/')
    // Opened directly (rendered on the server), the list stays after hydration.
    await page.goto('/outbox')
    await page.waitForLoadState('networkidle')
    expect(await page.getByTestId('outbox-list').locator('li').first().textContent()).toContain(inviteeEmail)
    const pendingEmail = `browser-pending-${unique()}@fernhollow.example`
    expect((await page.request.post('/api/invitations', { data: { email: pendingEmail, role: 'viewer' } })).status()).toBe(201)
    await page.goto('/people')
    await page.waitForLoadState('networkidle')
    expect(await page.getByTestId(`invitation-${inviteeEmail}`).count()).toBe(0)
    expect(await page.getByTestId(`invitation-${pendingEmail}`).count()).toBe(1)
  })

  it('forgot -> reset -> sign in', async () => {
    const email = `browser-member-${unique()}@fernhollow.example`
    const reply = await admin.page.request.post('/api/users', { data: { email, name: 'Lark Mossfield', role: 'viewer', password: 'mossfield-old-1' } })
    expect(reply.status()).toBe(201)

    const p = member.page
    await p.goto('/sign-in')
    await p.getByLabel('E-mail address').fill(email)
    await p.getByRole('link', { name: 'Forgot your password?' }).click()
    await p.waitForURL('**/forgot-password**')
    expect(await p.getByLabel('E-mail address').inputValue()).toBe(email)
    await p.getByRole('button', { name: 'Send the link' }).click()
    await expect.poll(() => p.getByTestId('forgot-answer').textContent()).toContain('If that address belongs to a Blockbell account')
    await screenshot(p, 'forgot-password-820x1000')

    const mail = await waitForMail(email, { subject: /Reset your Blockbell password/ })
    const rendered = await renderMail(member, mail.html, 'mail-password-reset')
    expect(rendered.text).toContain('Hello Lark Mossfield')
    await p.goto(linkIn(mail.text, '/reset-password/'))
    await expect.poll(() => p.textContent('h1')).toBe('Choose a new password')
    await screenshot(p, 'reset-password-page-820x1000')
    await p.getByLabel(/New password/).fill('mossfield-new-22')
    await p.getByLabel('The same password again').fill('mossfield-new-22')
    await p.getByRole('button', { name: 'Set the new password' }).click()
    await p.waitForURL('**/sign-in?reset=done')
    await expect.poll(() => p.getByTestId('reset-done').textContent()).toContain('Password changed')
    await signInThroughForm(p, email, 'mossfield-new-22')
    await p.waitForURL('**/panel')
    await expect.poll(() => p.getByTestId('account-link').textContent()).toContain('Lark Mossfield')

    const notice = await waitForMail(email, { subject: /password was changed/ })
    const noticeShown = await renderMail(member, notice.html, 'mail-password-changed')
    expect(noticeShown.text).toContain('Your password was changed')
  })

  it('renders the session summary mail', async () => {
    const mail = sessionSummaryMail({
      sessionId: 3, sessionName: 'Saturday evening running', layoutName: 'Wrenfold Junction', name: 'Tam Oakridge',
      startedAt: new Date('2026-11-28T18:30:00Z'), endedAt: new Date('2026-11-28T21:10:00Z'),
      trains: 14, signalsPassedAtDanger: 2, dropouts: 5,
      reviewUrl: 'http://127.0.0.1:3000/sessions/3', publicUrl: 'http://127.0.0.1:3000',
    })
    const rendered = await renderMail(admin, mail.html, 'mail-session-summary')
    expect(rendered.text).toContain('Signals passed at danger: 2')
    expect(rendered.text).toContain('Review the session')
  })

  it('had no console errors or hydration warnings', () => {
    expect(problems.filter(p => !/status of 4\d\d/.test(p))).toEqual([])
  })
})
