import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import mqtt, { type MqttClient } from 'mqtt'
import type { Page } from 'playwright-core'
import { DEMO } from '../support/http-client'
import { openBrowser, screenshot, signInThroughForm, type BrowserSession } from '../support/browser'
import { LiveClient } from '../support/live-client'
import type { ServerMessage } from '#shared/live/protocol'

// The Panel on touch screens the size of a tablet held either way (768x1024 and 1024x768), in Debian's
// chromium: what a tap reaches, that nothing moves or scrolls, and how it looks in both themes with a train
// on the move and an alarm up. Tap areas of 44 x 44 CSS px follow WCAG 2.2 SC 2.5.5 (Target Size, Enhanced).

const MQTT_URL = process.env.BLOCKBELL_TEST_MQTT_URL ?? 'mqtt://127.0.0.1:18839'
const PREFIX = 'blockbell/v1/wrenfold/'
const DEVICE = { username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo' }
const TOUCH_SIZES = [{ width: 768, height: 1024 }, { width: 1024, height: 768 }]
const SCREENSHOT_SIZES = [...TOUCH_SIZES, { width: 1280, height: 800 }]
const HIT = 44
const POLL = { interval: 50, timeout: 3000 }

type Snapshot = Extract<ServerMessage, { type: 'snapshot' }>
type Box = { x: number, y: number, width: number, height: number }

const centre = (b: Box) => ({ x: b.x + b.width / 2, y: b.y + b.height / 2 })

/** Taps at `at` and returns what opened ("<sheet title> | <line under it>", or "nothing"), then closes it. */
async function tap(page: Page, at: { x: number, y: number }): Promise<string> {
  await page.touchscreen.tap(at.x, at.y)
  // a tap opens its sheet in the same task; 400 ms is plenty to tell "nothing" from a slow sheet
  const opened = await page.waitForFunction(() => {
    const sheet = document.querySelector('[role="dialog"]')
    return sheet ? `${sheet.getAttribute('aria-label')} | ${sheet.querySelector('header p')?.textContent ?? ''}` : null
  }, null, { timeout: 400, polling: 20 }).then(h => h.jsonValue() as Promise<string>).catch(() => 'nothing')
  if (opened !== 'nothing') {
    await page.keyboard.press('Escape')
    await expect.poll(() => page.locator('[role="dialog"]').count(), POLL).toBe(0)
  }
  return opened
}

async function boxOf(page: Page, selector: string): Promise<Box> {
  const box = await page.locator(selector).first().boundingBox()
  if (!box) throw new Error(`nothing drawn for ${selector}`)
  return box
}

describe('the Panel on a touch screen (Debian chromium, touch contexts)', () => {
  let session: BrowserSession
  let before: Snapshot
  let device: MqttClient
  const problems: string[] = []

  beforeAll(async () => {
    const watcher = await LiveClient.as('viewer')
    before = watcher.messages.find((m): m is Snapshot => m.type === 'snapshot')!
    watcher.close()
    if (Object.values(before.areas).some(Boolean)) throw new Error('areas already held when the touch test starts')
    if (before.state.alarms.some(a => a.acknowledgedAt === null)) throw new Error('an alarm is open when the touch test starts')
    device = await mqtt.connectAsync(MQTT_URL, { ...DEVICE, clientId: `panel-touch-test-${process.pid}` })
    session = await openBrowser(TOUCH_SIZES[0]!, { touch: true })
    const { page } = session
    page.on('pageerror', e => problems.push(`page error: ${e.message}`))
    page.on('console', (m) => { if (m.type() === 'error' || /hydration/i.test(m.text())) problems.push(`console ${m.type()}: ${m.text()}`) })
    await signInThroughForm(page, DEMO.viewer.email, DEMO.viewer.password)
    await page.waitForURL('**/panel')
    await page.goto('/panel/wrenfold')
    await page.locator('[data-test="connection"][data-state="live"]').waitFor({ timeout: 10_000 })
  })

  afterAll(async () => {
    await session?.close()
    await device?.endAsync()
  })

  async function fitTo(size: { width: number, height: number }) {
    const { page } = session
    await page.setViewportSize(size)
    await page.waitForTimeout(400) // the diagram fits itself to the new size
    await page.evaluate(() => new Promise(requestAnimationFrame))
  }

  for (const size of TOUCH_SIZES) {
    describe(`at ${size.width}x${size.height}`, () => {
      it('fits the screen: nothing to scroll, the diagram and the side tabs in view', async () => {
        const { page } = session
        await fitTo(size)
        const fit = await page.evaluate(() => ({
          scrollHeight: document.documentElement.scrollHeight, scrollWidth: document.documentElement.scrollWidth,
          innerHeight, innerWidth,
        }))
        expect(fit.scrollHeight).toBeLessThanOrEqual(fit.innerHeight)
        expect(fit.scrollWidth).toBeLessThanOrEqual(fit.innerWidth)
        for (const sel of ['[data-test="diagram"]', '[data-test="side-tabs"]', '[data-test="tab-feed"]']) {
          const b = await boxOf(page, sel)
          expect(b.y + b.height, sel).toBeLessThanOrEqual(size.height)
        }
      })

      it('writes signal ids at 16 px or more on the screen', async () => {
        const sizes = await session.page.evaluate(() => [...document.querySelectorAll('[data-test="signal-label"]')].map(t => t.getBoundingClientRect().height))
        expect(sizes.length).toBe(before.definition.signals.length)
        // a text's box is about 1.2 times its font size; 16 px type gives a box of 19 px or more
        expect(Math.min(...sizes)).toBeGreaterThanOrEqual(16 * 1.15)
      })

      it('opens the signal whose id is tapped, for every signal', async () => {
        const { page } = session
        const wrong: string[] = []
        for (const sig of before.definition.signals) {
          const opened = await tap(page, centre(await boxOf(page, `[data-test="signal-${sig.id}"] [data-test="signal-label"]`)))
          if (!new RegExp(`\\| Signal ${sig.id}(?![0-9A-Za-z])`).test(opened)) wrong.push(`label ${sig.id} opened ${opened}`)
        }
        expect(wrong).toEqual([])
      })

      it('gives every signal, turnout and berth a tap area of at least 44 x 44 px round its mark', async () => {
        const { page } = session
        const marks = [
          ...before.definition.signals.map(s => ({ item: `Signal ${s.id}`, sel: `[data-test="signal-${s.id}"] [class^="bb-lamp-"]` })),
          ...before.definition.turnouts.map(t => ({ item: `Turnout ${t.id}`, sel: `[data-test="turnout-${t.id}"] [data-test="turnout-tag"] .bb-tag` })),
          ...Object.keys(before.definition.diagram.blocks).filter(b => before.definition.diagram.blocks[b]!.label).map(b => ({ item: `Block ${b}`, sel: `[data-test="berth-${b}"] rect` })),
        ]
        const wrong: string[] = []
        const centres = await Promise.all(marks.map(async m => centre(await boxOf(page, m.sel))))
        // the four corners of a 44 x 44 square on each mark's centre, 1 px inside; one corner of every mark in
        // turn, so that taps on one mark are never close enough together to count as one double tap
        for (const [dx, dy] of [[-1, -1], [1, -1], [1, 1], [-1, 1]] as const) {
          for (const [i, m] of marks.entries()) {
            const c = centres[i]!
            const at = { x: c.x + dx * (HIT / 2 - 1), y: c.y + dy * (HIT / 2 - 1) }
            const opened = await tap(page, at)
            const ok = m.item.startsWith('Block ') ? opened.includes(`| ${m.item} `) : new RegExp(`^${m.item} \\||\\| ${m.item}(?![0-9A-Za-z])`).test(opened)
            if (!ok) wrong.push(`${m.item} at (${dx * 21}, ${dy * 21}) opened ${opened}`)
          }
        }
        expect(wrong).toEqual([])
      }, 240_000)
    })
  }

  it('raises the alarm over the diagram without moving it, and shows it in both themes with a train on the move', async () => {
    const { page } = session
    await fitTo(TOUCH_SIZES[1]!)
    const still = await boxOf(page, '[data-test="diagram"]')
    // A signaller holds SU3 at danger; a train described 2A07 stands in UM3 and runs past SU3 into UM4.
    const tam = await LiveClient.as('signaller')
    try {
      const done = async (command: Record<string, unknown>) => {
        const r = await tam.command(command)
        expect(r.ok ? 'done' : r.reason, JSON.stringify(command)).toBe('done')
      }
      for (const area of before.definition.areas) await done({ action: 'take-area', area: area.id })
      const fresh = (await tam.snapshot()).state
      await done({ action: 'set-override', signal: 'SU3', mode: 'hold', revision: fresh.signalRevisions.SU3 ?? 0 })
      await device.publishAsync(`${PREFIX}detector/D03`, '1')
      await expect.poll(() => page.getByTestId('block-UM3').getAttribute('data-occupied'), POLL).toBe('true')
      await done({ action: 'interpose', block: 'UM3', description: '2A07' })
      await device.publishAsync(`${PREFIX}detector/D04`, '1')
      await page.getByTestId('alarm-banner').waitFor({ timeout: 3000 })
      await page.evaluate(() => new Promise(requestAnimationFrame))
      expect(await boxOf(page, '[data-test="diagram"]')).toEqual(still)

      for (const theme of ['dark', 'light'] as const) {
        if ((await page.getByTestId('theme').getAttribute('data-theme')) !== theme) await page.getByTestId('theme').tap()
        await expect.poll(() => page.evaluate(() => document.documentElement.classList.contains('light')), POLL).toBe(theme === 'light')
        for (const size of SCREENSHOT_SIZES) {
          await fitTo(size)
          expect(await page.getByTestId('alarm-banner').count()).toBe(1)
          await screenshot(page, `panel-touch-${theme}-${size.width}x${size.height}`, false)
        }
      }
      await page.getByTestId('theme').tap() // back to dark

      // the alarm acknowledged elsewhere: the banner goes and the diagram stays where it was
      await fitTo(TOUCH_SIZES[1]!)
      const withAlarm = await boxOf(page, '[data-test="diagram"]')
      const alarm = (await tam.snapshot()).state.alarms.find(a => a.acknowledgedAt === null)!
      await done({ action: 'acknowledge', alarm: alarm.id })
      await expect.poll(() => page.getByTestId('alarm-banner').count(), POLL).toBe(0)
      expect(await boxOf(page, '[data-test="diagram"]')).toEqual(withAlarm)
    } finally {
      await device.publishAsync(`${PREFIX}detector/D03`, '0')
      await device.publishAsync(`${PREFIX}detector/D04`, '0')
      await new Promise(resolve => setTimeout(resolve, 800)) // the server holds a clear for its debounce time
      const now = await tam.snapshot()
      for (const a of now.state.alarms.filter(x => x.acknowledgedAt === null)) await tam.command({ action: 'acknowledge', alarm: a.id })
      for (const blk of ['UM3', 'UM4']) if (now.state.descriptions[blk]) await tam.command({ action: 'interpose', block: blk, description: '' })
      await tam.command({ action: 'set-override', signal: 'SU3', mode: 'auto', revision: now.state.signalRevisions.SU3 ?? 0 })
      for (const area of before.definition.areas) await tam.command({ action: 'release-area', area: area.id })
      tam.close()
    }
    expect(problems).toEqual([])
  }, 120_000)
})
