import { mkdtempSync, mkdirSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { chromium, selectors, type BrowserContext, type Page } from 'playwright-core'
import { BASE_URL } from './http-client'

// Debian's chromium, driven by playwright-core (never a browser downloaded by a test tool).
export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium'
export const SCREENSHOT_DIR = process.env.BLOCKBELL_SCREENSHOTS ?? join(process.cwd(), 'tests/browser/screenshots')

export interface BrowserSession {
  context: BrowserContext
  page: Page
  /** Content-Security-Policy violations, hydration mismatches, Vue warnings and uncaught errors seen so far. */
  problems: string[]
  /** Every console error (some are expected, e.g. a 401 the page shows as a message). */
  consoleErrors: string[]
  /** Closes the browser; throws when any problem was seen, so every browser test fails on one. */
  close: () => Promise<void>
}

// Components mark what tests look for with data-test="…".
selectors.setTestIdAttribute('data-test')

/** `touch`: a touch-screen context (tablet), so tests can `tap()`. */
export async function openBrowser(viewport = { width: 1280, height: 800 }, options: { touch?: boolean, hasTouch?: boolean, baseURL?: string } = {}): Promise<BrowserSession> {
  const profile = mkdtempSync(join(tmpdir(), 'blockbell-chromium-'))
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM, headless: true, viewport, baseURL: options.baseURL ?? BASE_URL, hasTouch: options.touch ?? options.hasTouch ?? false,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
      '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  })
  const problems: string[] = []
  const consoleErrors: string[] = []
  // The violation event reaches the console through this script in every page the context opens.
  await context.addInitScript(() => {
    document.addEventListener('securitypolicyviolation', (e) => {
      console.error(`CSP violation: ${e.violatedDirective} blocked ${e.blockedURI || 'inline'} (${e.sourceFile}:${e.lineNumber})`)
    })
  })
  const watch = (page: Page) => {
    page.on('console', (m) => {
      const text = m.text()
      if (m.type() === 'error') consoleErrors.push(text)
      if (/CSP violation|Refused to|Content Security Policy|[Hh]ydration|\[Vue warn\]/.test(text)) problems.push(`${m.type()}: ${text}`)
    })
    page.on('pageerror', e => problems.push(`uncaught: ${e.message}`))
  }
  context.pages().forEach(watch)
  context.on('page', watch)
  const page = context.pages()[0] ?? await context.newPage()
  return {
    context, page, problems, consoleErrors,
    close: async () => {
      await context.close()
      rmSync(profile, { recursive: true, force: true })
      if (problems.length) throw new Error(`the browser reported problems:\n${problems.join('\n')}`)
    },
  }
}

/** Console errors other than failed requests with the given status codes (which a test expects). */
export function unexpectedConsoleErrors(session: BrowserSession, expectedStatuses: number[] = []): string[] {
  return session.consoleErrors.filter(e => !expectedStatuses.some(code => e.includes(`status of ${code}`)))
}

export async function screenshot(page: Page, name: string, fullPage = true): Promise<string> {
  mkdirSync(SCREENSHOT_DIR, { recursive: true })
  const path = join(SCREENSHOT_DIR, `${name}.png`)
  await page.screenshot({ path, fullPage })
  return path
}

export async function signInThroughForm(page: Page, email: string, password: string): Promise<void> {
  await page.goto('/sign-in')
  await page.getByLabel('E-mail address').fill(email)
  await page.getByLabel('Password').fill(password)
  await page.getByRole('button', { name: 'Sign in' }).click()
}
