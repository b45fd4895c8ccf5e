import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO } from '../support/http-client'
import { openBrowser, screenshot, signInThroughForm, unexpectedConsoleErrors, type BrowserSession } from '../support/browser'

// Every screen, loaded by its URL (server-rendered, then hydrated) and reached by the app's own navigation,
// shows what is built there, with no hydration mismatch, no CSP violation and no console error.
const SCREENS = [
  { path: '/panel', link: 'Panel', shows: '[data-test="diagram"]' },
  { path: '/layouts', link: 'Layouts', shows: '[data-test="devices"]' },
  { path: '/sessions', link: 'Sessions', shows: '[data-test="session-filters"]' },
  { path: '/maintenance', link: 'Maintenance', shows: '[data-test="stock-roster"]' },
  { path: '/people', link: 'People', shows: `[data-test="person-${DEMO.admin.email}"]` },
  { path: '/account', link: null, shows: '[data-test="sign-out-everywhere"]' },
]

describe('every screen, by URL and by navigation (Debian chromium)', () => {
  let browser: BrowserSession

  beforeAll(async () => {
    browser = await openBrowser({ width: 1280, height: 800 })
    await signInThroughForm(browser.page, DEMO.admin.email, DEMO.admin.password)
    await browser.page.waitForURL('**/panel')
  })
  afterAll(async () => { await browser?.close() })

  async function settled(): Promise<void> {
    await browser.page.waitForLoadState('networkidle')
  }

  it.each(SCREENS)('$path by URL', async ({ path, shows }) => {
    const { page } = browser
    await page.goto(path)
    await settled()
    await page.locator(shows).first().waitFor({ timeout: 10_000 })
    if (path === '/layouts') expect(await page.getByRole('heading', { name: 'Controllers on the MQTT broker' }).count()).toBe(1)
    if (path === '/people') expect(await page.locator('[data-test^="person-"]').count()).toBeGreaterThanOrEqual(4)
    expect(browser.problems).toEqual([])
    expect(unexpectedConsoleErrors(browser)).toEqual([])
    await screenshot(page, `screen${path.replaceAll('/', '-')}-by-url`)
  })

  it.each(SCREENS.filter(s => s.link))('$path by navigation', async ({ path, link, shows }) => {
    const { page } = browser
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: link!, exact: true }).click()
    await page.waitForURL(`**${path}*`)
    await page.locator(shows).first().waitFor({ timeout: 10_000 })
    expect(browser.problems).toEqual([])
    expect(unexpectedConsoleErrors(browser)).toEqual([])
  })

  it('the panel goes live over the WebSocket and the text is in Barlow under the CSP', async () => {
    const { page } = browser
    await page.goto('/panel')
    await page.locator('[data-test="connection"][data-state="live"]').waitFor({ timeout: 10_000 })
    expect(await page.evaluate(() => document.fonts.check('16px Barlow'))).toBe(true)
    expect(await page.evaluate(() => getComputedStyle(document.body).fontFamily)).toMatch(/^Barlow/)
    expect(browser.problems).toEqual([])
  })

  it('the CSP guard itself works: a script slipped into the page without the nonce is refused and reported', async () => {
    const { page } = browser
    // The real page and its real CSP header, with one inline script added as an injection would add it.
    await page.route('**/sessions', async (route) => {
      const response = await route.fetch()
      const html = (await response.text()).replace('</body>', '<script>window.injected = true</script></body>')
      await route.fulfill({ response, body: html })
    })
    await page.goto('/sessions')
    await page.unroute('**/sessions')
    await expect.poll(() => browser.problems.some(p => /CSP violation: script-src/.test(p))).toBe(true)
    expect(await page.evaluate(() => (window as unknown as { injected?: boolean }).injected)).toBeUndefined()
    browser.problems.length = 0 // seen on purpose
  })
})
