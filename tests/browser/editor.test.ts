import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import mqtt from 'mqtt'
import type { Page } from 'playwright-core'
import { validateLayout } from '#shared/signalling'
import { DEMO, signedIn, unique } from '../support/http-client'
import { openBrowser, screenshot, signInThroughForm, type BrowserSession } from '../support/browser'

// The layout editor on a touch screen at 1024x768, driven by taps only: build a layout from nothing, see a
// problem and fix it, try the signalling, save it, watch it on the Panel, export it and import the export.
const MQTT_URL = process.env.BLOCKBELL_TEST_MQTT_URL ?? 'mqtt://127.0.0.1:18839'
const DEVICE = { username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo' }
const POLL = { interval: 50, timeout: 5000 }

/** Taps the drawing at a point given in drawing units (through the zoom the canvas shows now). */
async function tapAt(page: Page, x: number, y: number) {
  const at = await page.evaluate(([px, py]) => {
    const svg = document.querySelector('[data-test="editor-canvas"] svg')!
    const g = svg.querySelector('g[transform]')!
    const m = /translate\(([-\d.e]+) ([-\d.e]+)\) scale\(([-\d.e]+)\)/.exec(g.getAttribute('transform')!)!
    const r = svg.getBoundingClientRect()
    return { x: r.left + Number(m[1]) + px * Number(m[3]), y: r.top + Number(m[2]) + py * Number(m[3]) }
  }, [x, y] as [number, number])
  await page.touchscreen.tap(at.x, at.y)
}

async function drawBlock(page: Page, points: [number, number][]) {
  await page.getByTestId('tool-block').tap()
  for (const [x, y] of points) await tapAt(page, x, y)
  await page.getByTestId('finish-block').tap()
}

describe('layout editor on a touch screen (Debian chromium)', () => {
  let browser: BrowserSession
  const problems: string[] = []
  const made: number[] = []

  beforeAll(async () => {
    browser = await openBrowser({ width: 1024, height: 768 }, { hasTouch: true })
    browser.page.on('pageerror', e => problems.push(`page error: ${e.message}`))
    browser.page.on('console', (m) => { if (m.type() === 'error' || /hydration/i.test(m.text())) problems.push(`console ${m.type()}: ${m.text()} (${browser.page.url()})`) })
  })
  afterAll(async () => {
    if (browser) await screenshot(browser.page, 'editor-last-seen')
    await browser?.close()
    // leave the Panel's list as it was: the layouts made here are archived
    const admin = await signedIn('admin')
    for (const id of made) await admin.patch(`/api/layouts/${id}`, { archived: true })
  })

  it('builds a line of four blocks, two signals and a turnout to a siding by taps, fixes a problem, tries it and saves it', async () => {
    const { page } = browser
    await signInThroughForm(page, DEMO.admin.email, DEMO.admin.password)
    await page.waitForURL('**/panel')
    await page.goto('/layouts')
    const name = `Sallow Light ${unique()}`
    const form = page.getByTestId('create-layout')
    await form.getByLabel('Name').fill(name)
    await form.getByRole('button', { name: /Make it/ }).tap()
    await page.waitForURL('**/edit')
    const slug = new URL(page.url()).pathname.split('/')[2]!
    await expect.poll(() => page.getByTestId('block-B1').count(), POLL).toBe(1)

    // start from nothing: take away the starter block
    await page.getByTestId('tool-select').tap()
    await tapAt(page, 280, 400)
    await page.getByTestId('delete-item').tap()
    await expect.poll(() => page.getByTestId('block-B1').count(), POLL).toBe(0)

    await drawBlock(page, [[200, 400], [400, 400]])
    await drawBlock(page, [[400, 400], [600, 400]])
    await drawBlock(page, [[600, 400], [800, 400]])
    await drawBlock(page, [[800, 400], [1000, 400]])
    await drawBlock(page, [[600, 400], [680, 480], [840, 480]])
    for (const id of ['B1', 'B2', 'B3', 'B4', 'B5']) expect(await page.getByTestId(`block-${id}`).count()).toBe(1)
    // the siding leaves B2 with no turnout yet: a problem, shown at the block and in the list
    await expect.poll(() => page.getByTestId('editor-errors').textContent(), POLL).toMatch(/forks to "B3" and "B5"/)
    expect(await page.getByTestId('fault-block:B2').count()).toBe(1)
    await screenshot(page, 'editor-error-1024x768')
    await page.getByTestId('error-0').tap()
    await expect.poll(() => page.getByTestId('inspector').textContent(), POLL).toContain('Block B2')

    await page.getByTestId('tool-turnout').tap()
    await tapAt(page, 600, 400)
    await expect.poll(() => page.getByTestId('inspector').textContent(), POLL).toContain('Turnout T1')
    expect(await page.getByTestId('field-normal').inputValue()).toBe('B3')
    expect(await page.getByTestId('field-reverse').inputValue()).toBe('B5')
    await page.getByTestId('tool-signal').tap()
    await tapAt(page, 380, 420)
    await page.getByTestId('tool-signal').tap()
    await tapAt(page, 580, 420)
    await expect.poll(() => page.getByTestId('editor-errors').textContent(), POLL).toContain('No problems')
    await screenshot(page, 'editor-drawing-1024x768')

    // undo takes the last signal away, redo brings it back
    await page.getByTestId('undo').tap()
    await expect.poll(() => page.getByTestId('signal-S2').count(), POLL).toBe(0)
    await page.getByTestId('redo').tap()
    await expect.poll(() => page.getByTestId('signal-S2').count(), POLL).toBe(1)

    // try it, in the browser alone: with T1 not known S1 shows danger; set normal, S1 clears; a train on B2 puts it back
    await page.getByTestId('tool-try').tap()
    const aspect = (id: string) => page.getByTestId(`signal-${id}`).getAttribute('data-aspect')
    expect(await aspect('S1')).toBe('danger')
    // a turnout is tapped on its tag (N / R / ?), drawn clear of the point where the legs part
    const tag = (await page.getByTestId('turnout-T1').getByTestId('turnout-tag').boundingBox())!
    await page.touchscreen.tap(tag.x + tag.width / 2, tag.y + tag.height / 2)
    await expect.poll(() => page.getByTestId('turnout-T1').getAttribute('data-position'), POLL).toBe('normal')
    await expect.poll(() => aspect('S1'), POLL).toBe('proceed')
    expect(await aspect('S2')).toBe('caution')
    await tapAt(page, 500, 400)
    await expect.poll(() => page.getByTestId('block-B2').getAttribute('data-occupied'), POLL).toBe('true')
    await expect.poll(() => aspect('S1'), POLL).toBe('danger')
    await screenshot(page, 'editor-try-1024x768')
    await page.setViewportSize({ width: 1280, height: 800 })
    await screenshot(page, 'editor-try-1280x800')
    await page.setViewportSize({ width: 1024, height: 768 })

    await page.getByTestId('tool-select').tap()
    await page.getByTestId('save').tap()
    await expect.poll(() => page.getByTestId('save-message').textContent(), POLL).toMatch(/version 2; it is current/)

    // the history has the save, with what it changed
    await page.goto(`/layouts/${slug}/versions`)
    await expect.poll(() => page.getByTestId('version-2').textContent(), POLL).toMatch(/current.*4 blocks, 4 links, 1 turnout, 2 signals added; 1 block changed/s)
    await screenshot(page, 'versions-1024x768')
    // an older version opens read only, drawn at a readable size
    await page.getByTestId('version-1').getByRole('link', { name: 'Open' }).tap()
    await page.waitForURL(`**/layouts/${slug}/versions/1`)
    const drawing = page.getByTestId('version-diagram')
    await drawing.waitFor()
    expect((await drawing.boundingBox())!.height).toBeGreaterThan(250)
    await screenshot(page, 'version-1-1024x768')

    // it runs on the Panel at once: a detector report from the layout lights the block
    await page.goto(`/panel/${slug}`)
    await expect.poll(() => page.getByTestId('block-B3').count(), POLL).toBe(1)
    const device = await mqtt.connectAsync(MQTT_URL, { ...DEVICE, clientId: `editor-test-${process.pid}` })
    await device.publishAsync(`blockbell/v1/${slug}/detector/D3`, '1')
    await expect.poll(() => page.getByTestId('block-B3').getAttribute('data-occupied'), POLL).toBe('true')
    await device.publishAsync(`blockbell/v1/${slug}/detector/D3`, '0')
    await device.endAsync()

    // export it and import the export as a new layout, which validates the same
    const list = (await (await page.request.get('/api/layouts')).json()).layouts as { id: number, slug: string }[]
    const id = list.find(l => l.slug === slug)!.id
    made.push(id)
    const exported = await page.request.get(`/api/layouts/${id}/export`)
    const file = await exported.body()
    await page.goto('/layouts')
    await page.getByTestId('import-layout').getByLabel(/JSON file/).setInputFiles({ name: `${slug}.json`, mimeType: 'application/json', buffer: file })
    await page.getByTestId('import-layout').getByRole('button', { name: 'Import' }).tap()
    await expect.poll(() => page.getByTestId('import-layout').getByRole('status').textContent(), POLL).toContain('Imported as')
    const after = (await (await page.request.get('/api/layouts')).json()).layouts as { id: number, slug: string, name: string }[]
    const imported = after.find(l => l.name === name && l.id !== id)!
    made.push(imported.id)
    const original = (await (await page.request.get(`/api/layouts/${id}`)).json()).layout.definition
    const copy = (await (await page.request.get(`/api/layouts/${imported.id}`)).json()).layout.definition
    expect(validateLayout(copy)).toEqual(validateLayout(original))
    expect(validateLayout(copy).ok).toBe(true)
    expect(problems).toEqual([])
  })
})
