import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO, unique } from '../support/http-client'
import { openBrowser, screenshot, signInThroughForm, type BrowserSession } from '../support/browser'

describe('in a real browser (Debian chromium)', () => {
  let browser: BrowserSession
  const failedRequests: string[] = []
  const consoleErrors: string[] = []

  beforeAll(async () => {
    browser = await openBrowser({ width: 1280, height: 800 })
    browser.page.on('requestfailed', r => failedRequests.push(r.url()))
    browser.page.on('console', (m) => { if (m.type() === 'error') consoleErrors.push(m.text()) })
  })
  afterAll(async () => { await browser?.close() })

  it('shows a clear message for a wrong password', async () => {
    const { page } = browser
    await signInThroughForm(page, DEMO.admin.email, 'definitely-wrong')
    await expect.poll(() => page.getByTestId('sign-in-error').textContent()).toContain('Wrong e-mail address or password.')
    expect(page.url()).toContain('/sign-in')
    await screenshot(page, 'sign-in-1280x800')
  })

  it('signs in as admin, opens People and creates a user', async () => {
    const { page } = browser
    await signInThroughForm(page, DEMO.admin.email, DEMO.admin.password)
    await page.waitForURL('**/panel')
    await expect.poll(() => page.getByTestId('panel-title').textContent()).toContain('Wrenfold Junction')
    await page.getByRole('link', { name: 'People' }).click()
    await page.waitForURL('**/people')
    const email = `browser-${unique()}@fernhollow.example`
    const form = page.getByTestId('create-person')
    await form.getByLabel('Name').fill('Sefa Underhill')
    await form.getByLabel('E-mail address').fill(email)
    await form.getByLabel('Role').selectOption('viewer')
    await form.getByLabel(/First password/).fill('underhill-pass')
    await form.getByRole('button', { name: 'Add person' }).click()
    await expect.poll(() => form.getByRole('status').textContent()).toContain(`can now sign in as ${email}`)
    await expect.poll(() => page.getByTestId(`person-${email}`).count()).toBe(1)
    await screenshot(page, 'people-1280x800')
  })

  it('shows the field message when a form is wrong', async () => {
    const { page } = browser
    const form = page.getByTestId('create-person')
    await form.getByLabel('Name').fill('Sefa Underhill')
    await form.getByLabel('E-mail address').fill('not-an-address')
    await form.getByLabel(/First password/).fill('short')
    await form.getByRole('button', { name: 'Add person' }).click()
    await expect.poll(() => form.textContent()).toContain('Enter a valid e-mail address')
    expect(await form.textContent()).toContain('A password has at least 10 characters')
  })

  it('loads everything from Blockbell itself, in the Barlow font', async () => {
    const { page } = browser
    const family = await page.evaluate(() => getComputedStyle(document.body).fontFamily)
    expect(family).toMatch(/^Barlow/)
    expect(await page.evaluate(() => document.fonts.check('16px Barlow'))).toBe(true)
    expect(failedRequests).toEqual([])
    expect(consoleErrors.filter(e => !/status of 4\d\d/.test(e))).toEqual([])
  })
})
