import { execFileSync } from 'node:child_process'
import { existsSync } from 'node:fs'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO } from '../support/http-client'
import { SCREENSHOT_DIR, openBrowser, screenshot, signInThroughForm, type BrowserSession } from '../support/browser'
import { runFakeLayoutScript } from '../support/fake-layout-process'

// The wiring schedule of the demo layout in chromium: the table at two sizes, the printed pages as a PDF, and
// the live wiring check lighting what the fake layout reports.
const MQTT_URL = process.env.BLOCKBELL_TEST_MQTT_URL ?? 'mqtt://127.0.0.1:18839'
const DEVICE = { username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo' }
const POLL = { interval: 100, timeout: 10_000 }

describe('wiring schedule (Debian chromium)', () => {
  let browser: BrowserSession
  const problems: string[] = []

  beforeAll(async () => {
    browser = await openBrowser({ width: 1024, height: 768 })
    browser.page.on('pageerror', e => problems.push(`page error: ${e.message}`))
    browser.page.on('console', (m) => { if (m.type() === 'error' || /hydration/i.test(m.text())) problems.push(`console ${m.type()}: ${m.text()}`) })
  })
  afterAll(async () => { await browser?.close() })

  it('lists every item with its topic, prints, and lights a detector and a turnout as the fake layout reports them', async () => {
    const { page } = browser
    await signInThroughForm(page, DEMO.admin.email, DEMO.admin.password)
    await page.waitForURL('**/panel')
    await page.goto('/layouts/wrenfold/wiring')
    await expect.poll(() => page.getByTestId('wiring-detector-D02').textContent(), POLL).toContain('blockbell/v1/wrenfold/detector/D02')
    await expect.poll(() => page.getByTestId('wiring-check').textContent(), POLL).toContain('listening')
    expect(await page.getByTestId('check-detector-D02').getAttribute('data-seen')).toBe('false')

    const run = runFakeLayoutScript({ mqttUrl: MQTT_URL, script: 'tests/browser/fixtures/wiring-walk.json', ...DEVICE })
    expect(await run.exited).toBe(0)
    await expect.poll(() => page.getByTestId('check-detector-D02').getAttribute('data-seen'), POLL).toBe('true')
    await expect.poll(() => page.getByTestId('check-detector-D02').textContent(), POLL).toMatch(/0 at .* · 2×/)
    await expect.poll(() => page.getByTestId('check-turnout-T2').getAttribute('data-seen'), POLL).toBe('true')
    expect(await page.getByTestId('check-missing').textContent()).not.toContain('D02')
    expect(await page.getByTestId('check-missing').textContent()).toContain('D01')
    await screenshot(page, 'wiring-1024x768')
    await page.setViewportSize({ width: 1280, height: 800 })
    await screenshot(page, 'wiring-1280x800')

    await page.emulateMedia({ media: 'print' })
    const pdf = join(SCREENSHOT_DIR, 'wiring-print.pdf')
    await page.pdf({ path: pdf, format: 'A4', printBackground: false, margin: { top: '12mm', bottom: '12mm', left: '10mm', right: '10mm' } })
    expect(existsSync(pdf)).toBe(true)
    // the PDF's pages as pictures, to look at (pdftoppm from Debian's poppler-utils, which scripts/test.sh installs)
    try { execFileSync('pdftoppm', ['-r', '70', '-png', pdf, join(SCREENSHOT_DIR, 'wiring-print')], { timeout: 60_000 }) } catch { /* no converter here: the PDF is still there */ }
    await page.emulateMedia({ media: 'screen' })
    expect(problems).toEqual([])
  })
})
