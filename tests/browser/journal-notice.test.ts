import { spawnSync } from 'node:child_process'
import { mkdtempSync, mkdirSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { journalEntryKey, newJournalBootId, prepareJournalEntry, toJournalSpillLine } from '../../server/live/journal-entry'
import { DEMO } from '../support/http-client'
import { openBrowser, screenshot, type BrowserSession } from '../support/browser'
import { freePort, startServer, type Running } from '../support/processes'

// A server that finds, in the spill file an earlier run left, one entry PostgreSQL can never take (a time
// past any date) sets it aside; admins see a line about it on their screens, other people do not.
describe('journal set-aside notice (Debian chromium)', () => {
  let server: Running & { url: string }
  let browser: BrowserSession
  const consoleErrors: string[] = []

  beforeAll(async () => {
    const dataDir = mkdtempSync(join(tmpdir(), 'blockbell-set-aside-'))
    const spillDir = join(dataDir, 'journal-spill')
    mkdirSync(spillDir)
    // Named as a journal of a process that has ended, so the server takes the file as left over.
    const ended = spawnSync('true').pid!
    const bootId = newJournalBootId(Date.now() - 60_000).replace(`-${process.pid.toString(36)}-`, `-${ended.toString(36)}-`)
    const entry = prepareJournalEntry({ layoutId: 1, sessionId: null, at: Date.now(), type: 'detector-input', subject: 'D13', payload: { detector: 'D13', occupied: true }, userId: null }, 1, journalEntryKey(bootId, 1)).stored
    writeFileSync(join(spillDir, `journal-${bootId}.jsonl`), toJournalSpillLine({ ...entry, at: 8_700_000_000_000_000 }))
    server = await startServer({ BLOCKBELL_DB_NAME: 'blockbell_e2e', MQTT_PORT: String(await freePort()), BLOCKBELL_DATA_DIR: dataDir })
    browser = await openBrowser({ width: 1280, height: 800 })
    browser.page.on('console', (m) => { if (m.type() === 'error' || /hydration/i.test(m.text())) consoleErrors.push(`${browser.page.url()}: ${m.text()}`) })
  })
  afterAll(async () => {
    await browser?.close()
    await server?.stop()
  })

  async function signIn(page: Page, who: keyof typeof DEMO) {
    await browser.context.clearCookies()
    await page.goto(`${server.url}/sign-in`)
    await page.getByLabel('E-mail address').fill(DEMO[who].email)
    await page.getByLabel('Password').fill(DEMO[who].password)
    await page.getByRole('button', { name: 'Sign in' }).click()
    await page.waitForURL('**/panel')
  }

  it('shows admins how many entries were set aside and why, on a full page load', async () => {
    const { page } = browser
    await signIn(page, 'admin')
    await page.goto(`${server.url}/account`)
    const notice = page.getByTestId('journal-notice')
    await expect.poll(() => notice.textContent()).toMatch(/1 journal entry could not be stored and was set aside \(newest: time 8700000000000000 is outside the years 1 to 9999\)/)
    await screenshot(page, 'journal-notice-admin-1280x800')
    await page.goto(`${server.url}/panel`)
    await expect.poll(() => notice.count()).toBe(1)
    await expect.poll(() => page.getByTestId('panel-title').textContent()).toContain('Wrenfold Junction')
    await screenshot(page, 'journal-notice-panel-1280x800')
    const health = await fetch(`${server.url}/api/health`).then(r => r.json())
    expect(health.journal).toEqual({ status: 'ok', setAside: 1 })
    expect(consoleErrors, consoleErrors.join('\n')).toEqual([])
  })

  it('shows nothing of it to a viewer', async () => {
    const { page } = browser
    consoleErrors.length = 0
    await signIn(page, 'viewer')
    await page.goto(`${server.url}/account`)
    await page.waitForLoadState('networkidle')
    expect(await page.getByTestId('journal-notice').count()).toBe(0)
    expect(consoleErrors, consoleErrors.join('\n')).toEqual([])
  })
})
