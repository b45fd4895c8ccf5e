// The Maintenance screen in Debian's chromium on a touch tablet: record a cleaning by tapping the blocks'
// rows, see them return to "OK". Fails on any console error (hydration warnings included).
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import sharp from 'sharp'
import { DEMO } from '../support/http-client'
import { openBrowser, screenshot, signInThroughForm, type BrowserSession } from '../support/browser'

describe('Maintenance screen', () => {
  let browser: BrowserSession
  const consoleErrors: string[] = []
  beforeAll(async () => {
    browser = await openBrowser({ width: 1024, height: 768 })
    browser.page.on('console', (m) => { if (m.type() === 'error' || /hydration/i.test(m.text())) consoleErrors.push(m.text()) })
  })
  afterAll(async () => { await browser?.close() })

  it('records a cleaning of two blocks picked by tapping their rows, loaded by URL', async () => {
    const { page } = browser
    await signInThroughForm(page, DEMO.signaller.email, DEMO.signaller.password)
    await page.waitForURL('**/panel')
    await page.goto('/maintenance')
    await expect.poll(() => page.getByTestId('maintenance-blocks').count()).toBe(1)
    await expect(page.getByTestId('cautions').textContent()).resolves.toMatch(/flammable/)
    await page.getByLabel(/^Pick DM1 /).click()
    await page.getByLabel(/^Pick DM2 /).click()
    await expect.poll(() => page.getByTestId('picked').textContent()).toContain('DM1, DM2')
    await screenshot(page, 'maintenance-1024x768')
    await page.getByTestId('record').click()
    await expect.poll(() => page.getByRole('status').first().textContent()).toContain('Cleaning of DM1, DM2 recorded.')
    await expect.poll(() => page.getByTestId('maintenance-blocks').getByTestId('block-DM1').getAttribute('data-state')).toBe('ok')
    expect(await page.getByTestId('maintenance-blocks').getByTestId('block-DM1').textContent()).not.toContain('never')
    await expect.poll(() => page.getByTestId('cleanings').textContent()).toContain('DM1, DM2')
    await screenshot(page, 'maintenance-recorded-1024x768')
    expect(consoleErrors).toEqual([])
  })

  it('records a cleaning with a photo, shown as a thumbnail in the history', async () => {
    const { page } = browser
    await page.setViewportSize({ width: 1280, height: 800 })
    await page.goto('/maintenance')
    await expect.poll(() => page.getByTestId('maintenance-blocks').count()).toBe(1)
    // pick UM4 by tapping its track on the diagram, half-way along it
    const diagram = page.getByTestId('maintenance-diagram')
    await expect.poll(() => diagram.getByTestId('due-UM4').count()).toBe(1)
    const mid = await diagram.getByTestId('block-UM4').locator('polyline.bb-track').evaluate((line: SVGPolylineElement) => {
      const p = line.getPointAtLength(line.getTotalLength() / 2).matrixTransform(line.getScreenCTM()!)
      return { x: p.x, y: p.y }
    })
    await page.mouse.click(mid.x, mid.y)
    await expect.poll(() => page.getByTestId('picked').textContent()).toContain('UM4')
    await expect.poll(() => diagram.getByTestId('due-UM4').getAttribute('data-picked')).toBe('true')
    expect(await page.getByLabel(/^Pick UM4 /).isChecked()).toBe(true)
    // the overlay shows each block's state as the list does
    for (const block of ['UM1', 'FY1', 'DM1']) {
      const listed = await page.getByTestId('maintenance-blocks').getByTestId(`block-${block}`).getAttribute('data-state')
      expect(await diagram.getByTestId(`due-${block}`).getAttribute('data-state'), block).toBe(listed)
    }
    const photo = await sharp({ create: { width: 900, height: 600, channels: 3, background: '#7d6b4f' } }).jpeg().toBuffer()
    await page.getByTestId('record-cleaning').getByTestId('photo-input').setInputFiles({ name: 'um4-after.jpg', mimeType: 'image/jpeg', buffer: photo })
    await expect.poll(() => page.getByTestId('photo-thumbnail').count()).toBe(1)
    await screenshot(page, 'maintenance-photo-1280x800')
    await page.getByTestId('record').click()
    await expect.poll(() => page.getByRole('status').first().textContent()).toContain('Cleaning of UM4 recorded with 1 photo.')
    const shown = page.getByTestId('cleaning').first().getByTestId('cleaning-photo')
    await expect.poll(() => shown.evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth)).toBe(320)
    await screenshot(page, 'maintenance-recorded-1280x800')
    expect(consoleErrors).toEqual([])
  })

  it('adds a locomotive with a photo to the roster and gives it the description it runs under (admin)', async () => {
    const admin = await openBrowser({ width: 1024, height: 768 })
    const errors: string[] = []
    admin.page.on('console', (m) => { if (m.type() === 'error' || /hydration/i.test(m.text())) errors.push(m.text()) })
    try {
      const { page } = admin
      await signInThroughForm(page, DEMO.admin.email, DEMO.admin.password)
      await page.waitForURL('**/panel')
      await page.goto('/maintenance')
      await expect.poll(() => page.getByTestId('stock-form').count()).toBe(1)
      const name = `Class 08 shunter ${Date.now() % 100000}`
      await page.getByLabel('Name', { exact: true }).fill(name)
      await page.getByLabel('Number (optional)').fill('08 611')
      await page.getByLabel('Service every … running hours').fill('20')
      const photo = await sharp({ create: { width: 640, height: 480, channels: 3, background: '#2f4a3a' } }).png().toBuffer()
      await page.getByTestId('stock-form').getByTestId('photo-input').setInputFiles({ name: 'shunter.png', mimeType: 'image/png', buffer: photo })
      await expect.poll(() => page.getByTestId('stock-form').getByTestId('photo-thumbnail').count()).toBe(1)
      await page.getByTestId('stock-add').click()
      const row = page.locator('[data-test^="stock-"]', { hasText: name }).first()
      await expect.poll(() => row.count()).toBe(1)
      await expect.poll(() => row.textContent()).toContain('0.0 running hours')
      await row.getByLabel('Runs under train description').fill('6K21')
      await row.getByRole('button', { name: 'Set' }).click()
      await expect.poll(() => page.getByLabel('Runs under train description').last().inputValue()).toBe('6K21')
      await page.getByTestId('stock-roster').scrollIntoViewIfNeeded()
      await screenshot(page, 'roster-1024x768')
      await page.setViewportSize({ width: 1280, height: 800 })
      await page.getByTestId('stock-roster').scrollIntoViewIfNeeded()
      await screenshot(page, 'roster-1280x800')

      // a task due today shows as due, and the navigation counts it
      const title = `Dust the station buildings ${Date.now() % 100000}`
      await page.getByLabel('What is to be done').fill(title)
      await page.getByLabel('Due on').fill(new Date().toISOString().slice(0, 10))
      await page.getByTestId('task-add').click()
      const task = page.locator('[data-test^="task-"][data-state]', { hasText: title }).first()
      await expect.poll(() => task.getAttribute('data-state')).toBe('due')
      await page.goto('/maintenance')
      await expect.poll(() => page.getByTestId('due-count').textContent()).toMatch(/^\d+$/)
      const counted = Number(await page.getByTestId('due-count').textContent())
      expect(await page.getByTestId('due-count').getAttribute('aria-label')).toBe(`${counted} maintenance ${counted === 1 ? 'item' : 'items'} due`)
      await page.getByTestId('tasks').scrollIntoViewIfNeeded()
      await screenshot(page, 'tasks-1280x800')
      await page.locator('[data-test^="task-"][data-state]', { hasText: title }).first().getByRole('button', { name: 'Done' }).click()
      await expect.poll(() => page.locator('[data-test^="task-"][data-state]', { hasText: title }).first().getAttribute('data-state')).toBe('finished')
      await page.goto('/maintenance')
      await expect.poll(async () => (await page.getByTestId('due-count').count()) ? Number(await page.getByTestId('due-count').textContent()) : 0).toBe(counted - 1)
      expect(errors).toEqual([])
    } finally {
      await admin.close()
    }
  })
})
