import { mkdtempSync, mkdirSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { chromium, selectors, type BrowserContext, type Page } from 'playwright-core'
import { BASE_URL } from './http-client'

// Debian's chromium, driven by playwright-core (never a browser downloaded by a test tool).
export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium'
export const SCREENSHOT_DIR = process.env.BLOCKBELL_SCREENSHOTS ?? join(process.cwd(), 'tests/browser/screenshots')

export interface BrowserSession { context: BrowserContext, page: Page, close: () => Promise<void> }

// Components mark what tests look for with data-test="…".
selectors.setTestIdAttribute('data-test')

/** `touch`: a tablet-like context (touch events, taps with `locator.tap()`). */
export async function openBrowser(viewport = { width: 1280, height: 800 }, options: { touch?: boolean } = {}): Promise<BrowserSession> {
  const profile = mkdtempSync(join(tmpdir(), 'blockbell-chromium-'))
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM, headless: true, viewport, baseURL: BASE_URL, hasTouch: options.touch ?? false,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
      '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  })
  const page = context.pages()[0] ?? await context.newPage()
  return {
    context, page,
    close: async () => { await context.close(); rmSync(profile, { recursive: true, force: true }) },
  }
}

export async function screenshot(page: Page, name: string): Promise<string> {
  mkdirSync(SCREENSHOT_DIR, { recursive: true })
  const path = join(SCREENSHOT_DIR, `${name}.png`)
  await page.screenshot({ path, fullPage: true })
  return path
}

export async function signInThroughForm(page: Page, email: string, password: string): Promise<void> {
  await page.goto('/sign-in')
  await page.getByLabel('E-mail address').fill(email)
  await page.getByLabel('Password').fill(password)
  await page.getByRole('button', { name: 'Sign in' }).click()
}
