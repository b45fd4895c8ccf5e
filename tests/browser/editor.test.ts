import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import mqtt from 'mqtt'
import type { Page } from 'playwright-core'
import { validateLayout } from '#shared/signalling'
import { DEMO, signedIn, unique } from '../support/http-client'
import { openBrowser, screenshot, signInThroughForm, type BrowserSession } from '../support/browser'
import { lineLayout } from '../support/layout-fixtures'
import { themes } from '../../tailwind.config'
import { hexChannels } from '#shared/theme/contrast'

// The layout editor on a touch screen at 1024x768, driven by taps only: build a layout from nothing, see a
// problem and fix it, try the signalling, save it, watch it on the Panel, export it and import the export.
const MQTT_URL = process.env.BLOCKBELL_TEST_MQTT_URL ?? 'mqtt://127.0.0.1:18839'
const DEVICE = { username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo' }
const POLL = { interval: 50, timeout: 5000 }
const rgb = (hex: string) => `rgb(${hexChannels(hex).join(', ')})`

/** Taps the drawing at a point given in drawing units (through the zoom the canvas shows now). */
async function tapAt(page: Page, x: number, y: number) {
  const at = await screenAt(page, x, y)
  await page.touchscreen.tap(at.x, at.y)
}

/** Where a point given in drawing units is on the screen now. */
function screenAt(page: Page, x: number, y: number) {
  return page.evaluate(([px, py]) => {
    const svg = document.querySelector('[data-test="editor-canvas"] svg')!
    const g = svg.querySelector('g[transform]')!
    const m = /translate\(([-\d.e]+) ([-\d.e]+)\) scale\(([-\d.e]+)\)/.exec(g.getAttribute('transform')!)!
    const r = svg.getBoundingClientRect()
    return { x: r.left + Number(m[1]) + px * Number(m[3]), y: r.top + Number(m[2]) + py * Number(m[3]), scale: Number(m[3]) }
  }, [x, y] as [number, number])
}

/**
 * A line of three blocks (tests/support/layout-fixtures.ts) whose B1 bends at (200,260), and its area of
 * control "hollin" (signals S2 and S3, so it covers B2 and B3) with no colour of its own.
 */
async function bentLine(made: number[]) {
  const admin = await signedIn('admin')
  const definition = lineLayout(`Sallow Bend ${unique()}`, 3)
  definition.diagram!.blocks!.B1!.path = [[100, 200], [200, 260], [290, 200]]
  const created = await admin.post<{ id: number, slug: string }>('/api/layouts', { name: definition.name, definition })
  expect(created.status).toBe(201)
  made.push(created.body.id)
  return created.body
}

/** The points of a block's track as drawn (PanelBlock draws the ends a little short of the path's ends). */
const drawnPoints = async (page: Page, block: string) =>
  (await page.getByTestId(`block-${block}`).locator('polyline.bb-track').getAttribute('points'))!.split(' ')

/** A block's path as this browser keeps it in its draft of the layout (written shortly after each change). */
const draftPath = (page: Page, slug: string, block: string) =>
  page.evaluate(([s, b]) => JSON.parse(localStorage.getItem(`blockbell:layout-draft:${s}`) ?? 'null')?.definition.diagram.blocks[b!].path, [slug, block])

/** A finger drag from one screen point to another in steps, as Chromium gets it from a touch screen. */
async function touchDrag(page: Page, from: { x: number, y: number }, to: { x: number, y: number }) {
  const cdp = await page.context().newCDPSession(page)
  await cdp.send('Input.dispatchTouchEvent', { type: 'touchStart', touchPoints: [{ x: from.x, y: from.y }] })
  for (let i = 1; i <= 10; i++) {
    await cdp.send('Input.dispatchTouchEvent', { type: 'touchMove', touchPoints: [{ x: from.x + (to.x - from.x) * i / 10, y: from.y + (to.y - from.y) * i / 10 }] })
  }
  await cdp.send('Input.dispatchTouchEvent', { type: 'touchEnd', touchPoints: [] })
  await cdp.detach()
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

  it('drags one bend of a selected block with a finger, snapped to the grid; undo and redo', async () => {
    const { page } = browser
    const layout = await bentLine(made)
    await page.goto(`/layouts/${layout.slug}/edit`)
    await page.getByTestId('block-B1').locator('polyline.bb-track').waitFor({ state: 'attached' })
    const before = await drawnPoints(page, 'B1')
    expect(before[1]).toBe('200,260')
    await page.getByTestId('tool-select').tap()
    await tapAt(page, 150, 230)
    await expect.poll(() => page.getByTestId('inspector').textContent(), POLL).toContain('Block B1')
    await page.getByTestId('track-point-1').waitFor({ state: 'attached' })

    // the bend, 43 units right and 61 down: (243,321) on the 20-unit grid is (240,320)
    const from = await screenAt(page, 200, 260)
    await touchDrag(page, from, { x: from.x + 43 * from.scale, y: from.y + 61 * from.scale })
    await expect.poll(async () => (await drawnPoints(page, 'B1'))[1], POLL).toBe('240,320')
    // the ends stay where they were, and so does the rest of the drawing
    await expect.poll(() => draftPath(page, layout.slug, 'B1'), POLL).toEqual([[100, 200], [240, 320], [290, 200]])
    expect(await drawnPoints(page, 'B2')).toEqual(['306,200', '484,200'])
    expect(await page.getByTestId('inspector').textContent()).toContain('Block B1')

    await page.getByTestId('undo').tap()
    await expect.poll(async () => (await drawnPoints(page, 'B1'))[1], POLL).toBe('200,260')
    expect(await drawnPoints(page, 'B1')).toEqual(before)
    await page.getByTestId('redo').tap()
    await expect.poll(async () => (await drawnPoints(page, 'B1'))[1], POLL).toBe('240,320')
    expect(problems).toEqual([])
  })

  it('drags an end of a block with a finger: the joined ends, the signal and the turnout there follow, and one undo puts all back', async () => {
    const { page } = browser
    const admin = await signedIn('admin')
    // the line's B1 ends at (290,200), where B2 now starts and a siding B4 leaves by turnout T1; signal S2
    // (at the exit of B1) stands beside that end at (290,225)
    const definition = lineLayout(`Sallow Joint ${unique()}`, 3)
    definition.blocks.push({ id: 'B4', name: 'Sallow siding', lengthMm: 700, detectors: ['D4'] })
    definition.links.push({ from: 'B1', to: 'B4' })
    definition.turnouts = [{ id: 'T1', block: 'B1', normal: 'B2', reverse: 'B4' }]
    definition.diagram!.blocks!.B2!.path = [[290, 200], [490, 200]]
    definition.diagram!.blocks!.B4 = { path: [[290, 200], [360, 260], [480, 260]] }
    definition.diagram!.turnouts = { T1: { at: [290, 200] } }
    expect(validateLayout(definition).ok).toBe(true)
    const created = await admin.post<{ id: number, slug: string }>('/api/layouts', { name: definition.name, definition })
    expect(created.status).toBe(201)
    made.push(created.body.id)
    const { slug } = created.body

    await page.goto(`/layouts/${slug}/edit`)
    await page.getByTestId('block-B4').locator('polyline.bb-track').waitFor({ state: 'attached' })
    // a signal is drawn at its lamp's centre (no transform on the mark)
    const lampAt = async (id: string) => {
      const lamp = page.getByTestId(`signal-${id}`).locator('circle[class^="bb-lamp-"]')
      return [await lamp.getAttribute('cx'), await lamp.getAttribute('cy')].join(',')
    }
    const signalAt = () => lampAt('S2')
    const turnoutAt = async () => {
      const blade = page.getByTestId('turnout-T1').locator('circle.bb-blade')
      return [await blade.getAttribute('cx'), await blade.getAttribute('cy')].join(',')
    }
    const drawn = async () => ({ B1: await drawnPoints(page, 'B1'), B2: await drawnPoints(page, 'B2'), B4: await drawnPoints(page, 'B4'), S2: await signalAt(), T1: await turnoutAt() })
    const before = await drawn()
    expect(before.S2).toBe('290,225')
    expect(before.T1).toBe('290,200')
    await page.getByTestId('tool-select').tap()
    await tapAt(page, 150, 200)
    await expect.poll(() => page.getByTestId('inspector').textContent(), POLL).toContain('Block B1')
    await page.getByTestId('track-point-1').waitFor({ state: 'attached' })

    // the end, 62 units right and 78 down: (352,278) on the 20-unit grid is (360,280), a move of (70,80)
    const from = await screenAt(page, 290, 200)
    await touchDrag(page, from, { x: from.x + 62 * from.scale, y: from.y + 78 * from.scale })
    await expect.poll(() => draftPath(page, slug, 'B1'), POLL).toEqual([[100, 200], [360, 280]])
    expect(await draftPath(page, slug, 'B2')).toEqual([[360, 280], [490, 200]])
    expect(await draftPath(page, slug, 'B4')).toEqual([[360, 280], [360, 260], [480, 260]])
    await expect.poll(signalAt, POLL).toBe('360,305')
    expect(await turnoutAt()).toBe('360,280')
    // B3 and S3 stay where they were; the drag's own layer is gone, each item drawn once
    expect(await drawnPoints(page, 'B3')).toEqual(['506,200', '684,200'])
    expect(await lampAt('S3')).toBe('490,225')
    expect(await page.getByTestId('drag-layer').count()).toBe(0)
    // the editor has no detectors to drop out: no block carries the drop-out mark
    expect(await page.locator('[data-test^="block-"][data-dropout="true"]').count()).toBe(0)
    expect(await page.getByTestId('dropout').count()).toBe(0)
    expect(await page.getByTestId('block-B1').count()).toBe(1)
    await screenshot(page, 'editor-end-dragged-1024x768')

    // one drag, one undo step
    await page.getByTestId('undo').tap()
    await expect.poll(drawn, POLL).toEqual(before)
    await expect.poll(() => draftPath(page, slug, 'B2'), POLL).toEqual([[290, 200], [490, 200]])
    expect(await draftPath(page, slug, 'B4')).toEqual([[290, 200], [360, 260], [480, 260]])
    expect(await page.getByTestId('undo').isDisabled()).toBe(true)
    await page.getByTestId('redo').tap()
    await expect.poll(signalAt, POLL).toBe('360,305')
    expect(await turnoutAt()).toBe('360,280')
    expect(problems).toEqual([])
  })

  it('picks an area\'s colour from the swatches, saves it, and the Panel draws the area\'s band and legend in it', async () => {
    const { page } = browser
    const layout = await bentLine(made)
    await page.goto(`/layouts/${layout.slug}/edit`)
    await page.getByTestId('block-B2').locator('polyline.bb-track').waitFor({ state: 'attached' })
    // no colour of its own: the first area takes the first colour, as before
    expect(await page.getByTestId('area-band-hollin').getAttribute('stroke')).toBe('var(--bb-area-0)')
    await page.getByRole('button', { name: 'Hollin bank', exact: true }).tap()
    const inspector = page.getByTestId('inspector')
    await expect.poll(() => inspector.textContent(), POLL).toContain('Area of control hollin')
    const swatch = (i: number) => page.getByTestId(`area-colour-${i}`)
    expect(await swatch(0).getAttribute('aria-checked')).toBe('true')
    for (const i of [0, 1, 2, 3]) {
      const box = (await swatch(i).boundingBox())!
      expect(box.height).toBeGreaterThanOrEqual(44)
      expect(box.width).toBeGreaterThanOrEqual(44)
    }

    await swatch(2).tap()
    await expect.poll(() => swatch(2).getAttribute('aria-checked'), POLL).toBe('true')
    expect(await swatch(0).getAttribute('aria-checked')).toBe('false')
    // marked by more than colour: a tick and the name in bold beside it
    expect(await swatch(2).getByTestId('area-colour-chosen').count()).toBe(1)
    expect(await page.getByTestId('area-colour-chosen').count()).toBe(1)
    expect(await swatch(2).textContent()).toContain('Brass')
    await expect.poll(() => page.getByTestId('area-band-hollin').getAttribute('stroke'), POLL).toBe('var(--bb-area-2)')
    for (const theme of ['dark', 'light'] as const) {
      if ((await page.getByTestId('theme').getAttribute('data-theme')) !== theme) await page.getByTestId('theme').tap()
      await expect.poll(() => page.evaluate(() => document.documentElement.classList.contains('light')), POLL).toBe(theme === 'light')
      // the buttons' colours fade into the new theme (transition-colors): let them finish first
      await page.evaluate(() => Promise.all(document.getAnimations().map(x => x.finished)))
      // the band is drawn in the colours the contrast test checks (tests/unit/theme/contrast.test.ts): edges in
      // the area's colour, the inside in its faint tint
      const stroke = (test: string) => page.getByTestId(test).evaluate(el => getComputedStyle(el).stroke)
      expect(await stroke('area-band-hollin')).toBe(rgb(themes[theme]['area-2']))
      expect(await stroke('area-wash-hollin')).toBe(rgb(themes[theme]['area-2-wash']))
      await screenshot(page, `editor-area-colour-${theme}-1024x768`, false)
    }
    await page.getByTestId('theme').tap() // back to dark

    await page.getByTestId('save').tap()
    await expect.poll(() => page.getByTestId('save-message').textContent(), POLL).toMatch(/it is current/)
    const stored = (await (await page.request.get(`/api/layouts/${layout.id}`)).json()).layout.definition
    expect(stored.areas[0].colour).toBe(2)

    await page.goto(`/panel/${layout.slug}`)
    await page.getByTestId('area-band-hollin').waitFor({ state: 'attached' })
    expect(await page.getByTestId('area-band-hollin').getAttribute('stroke')).toBe('var(--bb-area-2)')
    expect(await page.getByTestId('legend-hollin').locator('line').getAttribute('stroke')).toBe('var(--bb-area-2)')
    expect(problems).toEqual([])
  })
})

describe('layout editor with a mouse (Debian chromium)', () => {
  let browser: BrowserSession
  const made: number[] = []
  beforeAll(async () => {
    browser = await openBrowser({ width: 1024, height: 768 })
  })
  afterAll(async () => {
    await browser?.close()
    const admin = await signedIn('admin')
    for (const id of made) await admin.patch(`/api/layouts/${id}`, { archived: true })
  })

  it('moves a block dragged with the mouse, snapped to the grid, and undo puts it back', async () => {
    const { page } = browser
    const admin = await signedIn('admin')
    const name = `Sallow Mouse ${unique()}`
    const created = await admin.post<{ id: number, slug: string }>('/api/layouts', { name })
    expect(created.status).toBe(201)
    made.push(created.body.id)
    await signInThroughForm(page, DEMO.admin.email, DEMO.admin.password)
    await page.waitForURL('**/panel')
    await page.goto(`/layouts/${created.body.slug}/edit`)
    const track = page.getByTestId('block-B1').locator('polyline.bb-track')
    await track.waitFor({ state: 'attached' })
    const pointsBefore = await track.getAttribute('points')
    const transform = () => page.locator('[data-test="editor-canvas"] svg g[transform]').first().getAttribute('transform')

    // the new layout's block B1 runs from (160,400) to (400,400) (shared/layouts/blank.ts): click it, then drag it
    const on = await screenAt(page, 280, 400)
    await page.mouse.click(on.x, on.y)
    await expect.poll(() => page.getByTestId('inspector').textContent(), POLL).toContain('Block B1')
    // showing the block's settings must not move the drawing under the pointer
    const fittedAt = await transform()
    await page.mouse.move(on.x, on.y)
    await page.mouse.down()
    // 100 drawing units right and 40 down, in steps; the grid (20 units) snaps the result
    for (let i = 1; i <= 10; i++) await page.mouse.move(on.x + (103 * on.scale * i) / 10, on.y + (41 * on.scale * i) / 10)
    await page.mouse.up()
    await expect.poll(() => track.getAttribute('points'), POLL).not.toBe(pointsBefore)
    expect(await transform()).toBe(fittedAt)
    // the track is drawn 6 units short of each end (PanelBlock's END_GAP): 166..394 before, 266..494 after
    expect(pointsBefore).toBe('166,400 394,400')
    expect(await track.getAttribute('points')).toBe('266,440 494,440')
    // the berth moved with it: its box is centred on the new label point (380, 410)
    const berth = await page.getByTestId('berth-B1').locator('rect').evaluate((r: SVGRectElement) => [r.x.baseVal.value + r.width.baseVal.value / 2, r.y.baseVal.value + r.height.baseVal.value / 2])
    expect(berth.map(v => Math.round(v * 100) / 100)).toEqual([380, 410])

    await page.getByTestId('undo').click()
    await expect.poll(() => track.getAttribute('points'), POLL).toBe(pointsBefore)
    await page.getByTestId('redo').click()
    await expect.poll(() => track.getAttribute('points'), POLL).toBe('266,440 494,440')
    // the move is kept in this browser as a draft too (written shortly after the change)
    await expect.poll(() => page.evaluate(s => JSON.parse(localStorage.getItem(`blockbell:layout-draft:${s}`) ?? 'null')?.definition.diagram.blocks.B1.path, created.body.slug), POLL)
      .toEqual([[260, 440], [500, 440]])
  })

  it('drags one bend of a selected block with the mouse, snapped to the grid, and undo puts it back', async () => {
    const { page } = browser
    const layout = await bentLine(made)
    await page.goto(`/layouts/${layout.slug}/edit`)
    await page.getByTestId('block-B1').locator('polyline.bb-track').waitFor({ state: 'attached' })
    const before = await drawnPoints(page, 'B1')
    const on = await screenAt(page, 150, 230)
    await page.mouse.click(on.x, on.y)
    await expect.poll(() => page.getByTestId('inspector').textContent(), POLL).toContain('Block B1')

    // the bend, 78 units left and 37 up: (122,223) on the 20-unit grid is (120,220)
    const bend = await screenAt(page, 200, 260)
    await page.mouse.move(bend.x, bend.y)
    await page.mouse.down()
    for (let i = 1; i <= 10; i++) await page.mouse.move(bend.x - (78 * bend.scale * i) / 10, bend.y - (37 * bend.scale * i) / 10)
    await page.mouse.up()
    await expect.poll(async () => (await drawnPoints(page, 'B1'))[1], POLL).toBe('120,220')
    await expect.poll(() => draftPath(page, layout.slug, 'B1'), POLL).toEqual([[100, 200], [120, 220], [290, 200]])
    await page.keyboard.press('Control+z')
    await expect.poll(async () => (await drawnPoints(page, 'B1'))[1], POLL).toBe('200,260')
    expect(await drawnPoints(page, 'B1')).toEqual(before)
  })
})
