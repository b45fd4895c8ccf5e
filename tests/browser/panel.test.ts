import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import mqtt, { type MqttClient } from 'mqtt'
import type { Page } from 'playwright-core'
import { BASE_URL, DEMO } from '../support/http-client'
import { openBrowser, screenshot, signInThroughForm, type BrowserSession } from '../support/browser'
import { LiveClient } from '../support/live-client'
import { runFakeLayoutScript, type FakeLayoutRun } from '../support/fake-layout-process'
import { startTcpRelay, type TcpRelay } from '../support/tcp-relay'
import type { ServerMessage } from '#shared/live/protocol'

// The Panel in Debian's chromium with three people on Wrenfold Junction at once: Tam Oakridge (signaller A),
// Rhea Lintwhistle (signaller B) and the viewer, on the real server, its embedded broker and the fake layout
// process. The viewer reaches the server through a TCP relay, so its network can be cut and restored.

const MQTT_URL = process.env.BLOCKBELL_TEST_MQTT_URL ?? 'mqtt://127.0.0.1:18839'
const PREFIX = 'blockbell/v1/wrenfold/'
const DEVICE = { username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo' }
const FIXTURES = 'tests/browser/fixtures'
/** What a person at one panel does reaches the other panels within this (a behaviour bound, not a benchmark). */
const CROSS_PANEL_MS = 1000
/** A detector publish reaches every panel within this. */
const PUBLISH_TO_PANEL_MS = 2000
const POLL = { interval: 50 }
const SIZES = [{ width: 768, height: 1024 }, { width: 1024, height: 768 }, { width: 1280, height: 800 }]

type Snapshot = Extract<ServerMessage, { type: 'snapshot' }>

interface Seen {
  connection: string | null
  occupied: Record<string, boolean>
  aspects: Record<string, string>
  overrides: Record<string, string>
  held: string[]
  berths: Record<string, string | null>
  holders: Record<string, string>
  legend: Record<string, string>
  alarm: string | null
  alarmSignals: string[]
  alarmBlocks: string[]
  stale: boolean
}

/** What one panel shows right now, read from the page in one go. */
function seen(page: Page): Promise<Seen> {
  return page.evaluate(() => {
    const all = (sel: string) => [...document.querySelectorAll<HTMLElement | SVGElement>(sel)]
    const id = (el: Element, prefix: string) => el.getAttribute('data-test')!.slice(prefix.length)
    const text = (el: Element | null) => el?.textContent?.replace(/\s+/g, ' ').trim() ?? null
    return {
      connection: document.querySelector('[data-test="connection"]')?.getAttribute('data-state') ?? null,
      occupied: Object.fromEntries(all('[data-test^="block-"][data-occupied]').map(e => [id(e, 'block-'), e.getAttribute('data-occupied') === 'true'])),
      aspects: Object.fromEntries(all('[data-test^="signal-"][data-aspect]').map(e => [id(e, 'signal-'), e.getAttribute('data-aspect')!])),
      overrides: Object.fromEntries(all('[data-test^="signal-"][data-override]').map(e => [id(e, 'signal-'), e.getAttribute('data-override')!])),
      held: all('[data-test^="signal-"][data-aspect]').filter(e => e.querySelector('[data-test="held-ring"]')).map(e => id(e, 'signal-')),
      berths: Object.fromEntries(all('[data-test^="berth-"]').map(e => [id(e, 'berth-'), text(e.querySelector('[data-test="description"]'))])),
      holders: Object.fromEntries(all('[data-test="area-main"], [data-test="area-branch"]').map(e => [id(e, 'area-'), text(e.querySelector('[data-test="holder"]')) ?? ''])),
      legend: Object.fromEntries(all('[data-test^="legend-"]').map(e => [id(e, 'legend-'), text(e) ?? ''])),
      alarm: text(document.querySelector('[data-test="alarm-banner"]')),
      alarmSignals: all('[data-test="signal-alarm"]').map(e => e.closest('[data-aspect]')!.getAttribute('data-test')!.slice('signal-'.length)),
      alarmBlocks: all('[data-test="block-alarm"]').map(e => e.closest('[data-occupied]')!.getAttribute('data-test')!.slice('block-'.length)),
      stale: !!document.querySelector('[data-test="stale"]'),
    }
  })
}

describe('the Panel with three people on one layout (Debian chromium)', () => {
  let relay: TcpRelay
  let a: BrowserSession
  let b: BrowserSession
  let viewer: BrowserSession
  let device: MqttClient
  let before: Snapshot
  const fakeRuns: FakeLayoutRun[] = []
  const pageErrors: string[] = []
  const panels = () => [{ who: 'A', page: a.page }, { who: 'B', page: b.page }, { who: 'viewer', page: viewer.page }]

  /** Polls every panel at once until `check` passes on each, within `timeout` ms. */
  async function onEvery(check: (s: Seen, who: string) => void, timeout = CROSS_PANEL_MS, which = panels()) {
    await Promise.all(which.map(({ who, page }) => expect.poll(async () => {
      const s = await seen(page)
      try {
        check(s, who)
        return 'ok'
      } catch (e) {
        return `${who}: ${(e as Error).message}`
      }
    }, { timeout, ...POLL }).toBe('ok')))
  }

  function fake(script: string): FakeLayoutRun {
    const run = runFakeLayoutScript({ mqttUrl: MQTT_URL, script: `${FIXTURES}/${script}`, ...DEVICE })
    fakeRuns.push(run)
    return run
  }

  async function openPanel(email: string, password: string, base: string): Promise<BrowserSession> {
    const session = await openBrowser({ width: 1280, height: 800 })
    const { page } = session
    page.on('pageerror', e => pageErrors.push(`${email}: ${e.message}`))
    if (base === BASE_URL) await signInThroughForm(page, email, password)
    else {
      await page.goto(`${base}/sign-in`)
      await page.getByLabel('E-mail address').fill(email)
      await page.getByLabel('Password').fill(password)
      await page.getByRole('button', { name: 'Sign in' }).click()
    }
    await page.waitForURL('**/panel')
    await page.goto(`${base}/panel/wrenfold`)
    await page.locator('[data-test="connection"][data-state="live"]').waitFor({ timeout: 10_000 })
    await page.getByTestId('diagram').waitFor()
    return session
  }

  beforeAll(async () => {
    const watcher = await LiveClient.as('viewer')
    before = watcher.messages.find((m): m is Snapshot => m.type === 'snapshot')!
    watcher.close()
    const busy = Object.entries(before.areas).filter(([, h]) => h)
    if (busy.length) throw new Error(`areas already held when the panel test starts: ${JSON.stringify(busy)}`)
    if (before.state.alarms.some(x => x.acknowledgedAt === null)) throw new Error('an alarm is open when the panel test starts')
    const upMain = ['UM1', 'UM2', 'UM3', 'UM4'].filter(blk => before.state.occupied[blk] || before.state.descriptions[blk])
    if (upMain.length) throw new Error(`the up main is not clear when the panel test starts: ${upMain.join(', ')}`)
    device = await mqtt.connectAsync(MQTT_URL, { ...DEVICE, clientId: `panel-test-${process.pid}` })
    relay = await startTcpRelay({ host: '127.0.0.1', port: Number(new URL(BASE_URL).port) })
    ;[a, b, viewer] = await Promise.all([
      openPanel(DEMO.signaller.email, DEMO.signaller.password, BASE_URL),
      openPanel(DEMO.signaller2.email, DEMO.signaller2.password, BASE_URL),
      openPanel(DEMO.viewer.email, DEMO.viewer.password, relay.url),
    ])
  })

  afterAll(async () => {
    for (const run of fakeRuns) await run.stop()
    await Promise.all([a, b, viewer].map(s => s?.close()))
    await restoreLayout()
    await device?.endAsync()
    await relay?.close()
  })

  /** Puts the layout back as it was found, whatever step a failure stopped at. */
  async function restoreLayout() {
    if (!before || !device) return
    const tam = await LiveClient.as('signaller')
    const tamId = tam.messages.find((m): m is Extract<ServerMessage, { type: 'welcome' }> => m.type === 'welcome')?.user.id ?? -1
    let now = await tam.snapshot()
    for (const blk of before.definition.blocks) {
      if (now.state.occupied[blk.id] && !before.state.occupied[blk.id]) {
        for (const d of blk.detectors) await device.publishAsync(`${PREFIX}detector/${d}`, '0')
      }
    }
    for (const t of before.definition.turnouts) {
      const was = before.state.turnouts[t.id]
      if ((was === 'normal' || was === 'reverse') && now.state.turnouts[t.id] !== was) await device.publishAsync(`${PREFIX}turnout/${t.id}`, was, { retain: true })
    }
    await new Promise(resolve => setTimeout(resolve, 800)) // the server holds a clear for its debounce time
    now = await tam.snapshot()
    for (const alarm of now.state.alarms.filter(x => x.acknowledgedAt === null)) await tam.command({ action: 'acknowledge', alarm: alarm.id })
    const overrides = before.definition.signals.map(s => s.id).filter(s => (now.state.overrides[s] ?? 'auto') !== (before.state.overrides[s] ?? 'auto'))
    const descriptions = [...new Set([...Object.keys(now.state.descriptions), ...Object.keys(before.state.descriptions)])]
      .filter(blk => before.state.descriptions[blk] !== now.state.descriptions[blk])
    if (overrides.length || descriptions.length) {
      for (const area of before.definition.areas) {
        if (!now.areas[area.id]) await tam.command({ action: 'take-area', area: area.id })
      }
      const fresh = (await tam.snapshot()).state
      for (const s of overrides) await tam.command({ action: 'set-override', signal: s, mode: before.state.overrides[s] ?? 'auto', revision: fresh.signalRevisions[s] ?? 0 })
      for (const blk of descriptions) await tam.command({ action: 'interpose', block: blk, description: before.state.descriptions[blk] ?? '' })
    }
    const after = await tam.snapshot()
    const held = Object.entries(after.areas).filter(([area, h]) => h && !before.areas[area])
    for (const [area, holder] of held) if (holder!.id === tamId) await tam.command({ action: 'release-area', area })
    tam.close()
    if (held.some(([, h]) => h!.id !== tamId)) {
      const admin = await LiveClient.as('admin')
      for (const [area, holder] of held) if (holder!.id !== tamId) await admin.command({ action: 'force-release', area })
      admin.close()
    }
  }

  it('signaller A takes the main line and holds SU3: B and the viewer see the holder and the held signal within a second', async () => {
    const { page } = a
    await page.getByTestId('area-main').getByTestId('take').click()
    await expect.poll(() => page.getByTestId('area-main').getByTestId('holder').textContent(), POLL).toBe('held by you')
    await onEvery((s) => {
      expect(s.holders.main).toBe('held by Tam Oakridge')
      expect(s.legend.main).toContain('Tam Oakridge')
      expect(s.holders.branch).toBe('not held')
    }, CROSS_PANEL_MS, panels().slice(1))

    await page.getByTestId('signal-SU3').click()
    const sheet = page.getByTestId('signal-sheet')
    await sheet.getByTestId('set-hold').click()
    await onEvery((s) => {
      expect(s.overrides.SU3).toBe('hold')
      expect(s.aspects.SU3).toBe('danger')
      expect(s.held).toEqual(['SU3'])
    })
    await expect.poll(() => sheet.getByTestId('set-hold').getAttribute('aria-pressed'), POLL).toBe('true')
    await expect.poll(() => sheet.getByTestId('command-done').count(), POLL).toBe(1)
    await sheet.getByTestId('sheet-close').click()
    await expect.poll(() => page.getByTestId('signal-sheet').count(), POLL).toBe(0)
  })

  it('signaller B cannot work the main line: the panel says who holds it and offers no control', async () => {
    const { page } = b
    const chip = page.getByTestId('area-main')
    expect(await chip.getByRole('button').count()).toBe(0)
    expect(await chip.getByTestId('area-note').textContent()).toContain('Held by Tam Oakridge')
    // B may take the free area, only not A's
    expect(await page.getByTestId('area-branch').getByTestId('take').count()).toBe(1)

    await page.getByTestId('signal-SU3').click()
    const sheet = page.getByTestId('signal-sheet')
    await expect.poll(() => sheet.getByTestId('no-control-reason').textContent(), POLL).toBe('Tam Oakridge holds Main line; only the holder works this signal.')
    expect(await sheet.getByTestId('override-controls').count()).toBe(0)
    expect(await sheet.getByRole('button', { name: /hold|auto|clear/i }).count()).toBe(0)
    await sheet.getByTestId('sheet-close').click()

    const t5 = await page.getByTestId('turnout-T5').getAttribute('data-position')
    await page.getByTestId('turnout-T5').getByTestId('turnout-tag').click()
    const turnoutSheet = page.getByTestId('turnout-sheet')
    expect(await turnoutSheet.getAttribute('aria-label')).toBe('Turnout T5')
    await expect.poll(() => turnoutSheet.getByTestId('no-control-reason').textContent(), POLL).toBe('Tam Oakridge holds Main line; only the holder works this turnout.')
    expect(await turnoutSheet.getByTestId('turnout-controls').count()).toBe(0)
    expect(await page.getByTestId('turnout-T5').getAttribute('data-position')).toBe(t5)
    await turnoutSheet.getByTestId('sheet-close').click()

    await page.getByTestId('berth-UM1').click()
    const dialog = page.getByTestId('interpose-dialog')
    await expect.poll(() => dialog.getByTestId('no-control-reason').textContent(), POLL).toBe('Tam Oakridge holds Main line; only the holder works this berth.')
    expect(await dialog.getByTestId('interpose-input').count()).toBe(0)
    await dialog.getByTestId('sheet-close').click()
  })

  it('the viewer has no controls at all, only the reason', async () => {
    const { page } = viewer
    for (const control of ['take', 'release', 'handover', 'force-release', 'acknowledge']) {
      expect(await page.getByTestId(control).count(), control).toBe(0)
    }
    expect(await page.getByTestId('area-main').getByTestId('area-note').textContent()).toBe('Viewers watch only.')
    expect(await page.getByTestId('area-branch').getByRole('button').count()).toBe(0)
    for (const [item, sheetId] of [['signal-SF1', 'signal-sheet'], ['turnout-T4', 'turnout-sheet'], ['berth-UM2', 'interpose-dialog']] as const) {
      await (item.startsWith('turnout-') ? page.getByTestId(item).getByTestId('turnout-tag') : page.getByTestId(item)).click()
      const sheet = page.getByTestId(sheetId)
      await expect.poll(() => sheet.getByTestId('no-control-reason').textContent(), POLL).toBe('You are signed in as a viewer: you can watch, not operate.')
      expect(await sheet.locator('button:not([data-test="sheet-close"]), input, select').count(), item).toBe(0)
      await sheet.getByTestId('sheet-close').click()
      await expect.poll(() => page.getByTestId(sheetId).count(), POLL).toBe(0)
    }
  })

  it('at 1024x768 a tap on the middle of each turnout (its tag, and all it draws) and of each signal lamp opens that one, not a neighbour', async () => {
    const { page } = viewer
    await page.setViewportSize({ width: 1024, height: 768 })
    await page.waitForTimeout(400) // the diagram fits itself to the new size
    const centre = async (sel: ReturnType<Page['locator']>) => {
      const box = (await sel.boundingBox())!
      return { x: box.x + box.width / 2, y: box.y + box.height / 2 }
    }
    /** Taps at `at` and returns what opened: the sheet's title | the line under it. */
    const tap = async (at: { x: number, y: number }) => {
      await page.mouse.click(at.x, at.y)
      const sheet = page.locator('[role="dialog"]')
      await sheet.waitFor({ timeout: 2000 }).catch(() => {})
      const opened = await sheet.count() ? `${await sheet.getAttribute('aria-label')} | ${await sheet.locator('header p').first().textContent()}` : 'nothing'
      if (await sheet.count()) await sheet.getByTestId('sheet-close').click()
      await expect.poll(() => page.locator('[role="dialog"]').count(), POLL).toBe(0)
      return opened
    }
    const wrong: string[] = []
    for (const t of before.definition.turnouts) {
      const opened = await tap(await centre(page.getByTestId(`turnout-${t.id}`).getByTestId('turnout-tag')))
      if (!opened.startsWith(`Turnout ${t.id} |`)) wrong.push(`tag of ${t.id} opened ${opened}`)
      // the middle of all it draws (legs and tag)
      const whole = await tap(await centre(page.getByTestId(`turnout-${t.id}`)))
      if (!whole.startsWith(`Turnout ${t.id} |`)) wrong.push(`middle of ${t.id} opened ${whole}`)
    }
    for (const sig of before.definition.signals) {
      const opened = await tap(await centre(page.getByTestId(`signal-${sig.id}`).locator('[class^="bb-lamp-"]')))
      if (!new RegExp(`\\| Signal ${sig.id}(?![0-9A-Za-z])`).test(opened)) wrong.push(`lamp of ${sig.id} opened ${opened}`)
    }
    expect(wrong).toEqual([])
    await page.setViewportSize({ width: 1280, height: 800 })
  })

  it('the fake layout moves a train up the main line: occupancy, aspects and the description step on all three panels', async () => {
    // A train is set on the up approach from the fiddle yard, undescribed; A interposes 1F42 in its berth.
    const arrival = fake('up-main-arrival.json')
    await arrival.line(/detector\/D01 1/)
    await onEvery((s) => {
      expect(s.occupied.UM1).toBe(true)
      expect(s.berths.UM1).toBeNull()
      // SU3 held at danger: SU2 shows caution and SU1 preliminary caution; SF1 reads into the occupied UM1
      expect(s.aspects).toMatchObject({ SF1: 'danger', SU1: 'preliminary-caution', SU2: 'caution', SU3: 'danger' })
    }, PUBLISH_TO_PANEL_MS)
    expect(await arrival.exited).toBe(0)

    await a.page.getByTestId('berth-UM1').click()
    const dialog = a.page.getByTestId('interpose-dialog')
    await dialog.getByTestId('interpose-input').fill('1F42')
    await dialog.getByTestId('interpose-submit').click()
    await onEvery(s => expect(s.berths.UM1).toBe('1F42'))
    if (await dialog.count()) await dialog.getByTestId('sheet-close').click()

    const run = fake('up-main-run.json')
    await run.line(/detector\/D02 1/)
    await onEvery((s) => {
      expect(s.occupied).toMatchObject({ UM1: true, UM2: true, UM3: false })
      expect(s.berths).toMatchObject({ UM1: '1F42', UM2: '1F42', UM3: null })
      expect(s.aspects).toMatchObject({ SU1: 'danger', SU2: 'caution' })
    }, PUBLISH_TO_PANEL_MS)
    await run.line(/detector\/D01 0/)
    await onEvery((s) => {
      expect(s.occupied).toMatchObject({ UM1: false, UM2: true })
      expect(s.berths).toMatchObject({ UM1: null, UM2: '1F42' })
      expect(s.aspects).toMatchObject({ SF1: 'proceed', SU1: 'danger' })
    }, PUBLISH_TO_PANEL_MS)
    await run.line(/detector\/D03 1/)
    await onEvery((s) => {
      expect(s.occupied).toMatchObject({ UM2: true, UM3: true })
      expect(s.berths).toMatchObject({ UM2: '1F42', UM3: '1F42' })
      expect(s.aspects).toMatchObject({ SU1: 'danger', SU2: 'danger', SU3: 'danger' })
    }, PUBLISH_TO_PANEL_MS)
    await run.line(/detector\/D02 0/)
    await onEvery((s) => {
      expect(s.occupied).toMatchObject({ UM1: false, UM2: false, UM3: true, UM4: false })
      expect(s.berths).toMatchObject({ UM1: null, UM2: null, UM3: '1F42' })
      expect(s.aspects).toMatchObject({ SU1: 'caution', SU2: 'danger', SU3: 'danger' })
      expect(s.alarm).toBeNull()
    }, PUBLISH_TO_PANEL_MS)
    expect(await run.exited).toBe(0)
  })

  let spad: FakeLayoutRun
  it('a train running past SU3 at danger raises the alarm on all three panels', async () => {
    spad = fake('up-main-spad.json')
    await spad.line(/detector\/D04 1/)
    await onEvery((s, who) => {
      expect(s.alarm).toContain('Signal passed at danger: Wrenfold up main (SU3). Train 1F42 entered Up departure (UM4).')
      expect(s.alarm).toContain('Blockbell is not a safety system')
      expect(s.alarmSignals).toEqual(['SU3'])
      expect(s.alarmBlocks).toEqual(['UM4'])
      expect(s.occupied).toMatchObject({ UM3: true, UM4: true })
      expect(s.berths).toMatchObject({ UM4: '1F42' })
      if (who === 'viewer') expect(s.alarm).toContain('A signaller acknowledges alarms.')
    }, PUBLISH_TO_PANEL_MS)
    expect(await a.page.getByTestId('alarm-banner').getByTestId('acknowledge').count()).toBe(1)
    expect(await b.page.getByTestId('alarm-banner').getByTestId('acknowledge').count()).toBe(1)
    expect(await viewer.page.getByTestId('alarm-banner').getByTestId('acknowledge').count()).toBe(0)
  })

  it('screenshots at 768x1024, 1024x768 and 1280x800 with the train on the move and the alarm up', async () => {
    const { page } = a
    for (const size of SIZES) {
      await page.setViewportSize(size)
      await page.waitForTimeout(400) // the diagram fits itself to the new size
      await page.evaluate(() => new Promise(requestAnimationFrame))
      const s = await seen(page)
      expect(s.alarm).not.toBeNull()
      expect(s.occupied.UM4).toBe(true)
      await screenshot(page, `panel-${size.width}x${size.height}`)
    }
    await page.setViewportSize({ width: 1280, height: 800 })
  })

  it('one acknowledgement by A clears the alarm on all three panels', async () => {
    await a.page.getByTestId('alarm-banner').getByTestId('acknowledge').click()
    await onEvery((s) => {
      expect(s.alarm).toBeNull()
      expect(s.alarmSignals).toEqual([])
      expect(s.alarmBlocks).toEqual([])
    })
    for (const { who, page } of panels().slice(1)) {
      const note = await page.getByTestId('alarm-acknowledged').textContent()
      expect(note, who).toMatch(/Alarm at SU3 acknowledged by Tam Oakridge at/)
    }
    expect(await spad.exited).toBe(0)
    await onEvery(s => expect(s.occupied).toMatchObject({ UM3: false, UM4: true }), PUBLISH_TO_PANEL_MS)
  })

  it('after the connection is cut and restored, the viewer\'s panel is live again with what changed meanwhile', async () => {
    const { page, context } = viewer
    // The network goes: the relay drops the socket and refuses new ones; the browser reports itself offline.
    relay.cut()
    await context.setOffline(true)
    await expect.poll(() => page.getByTestId('connection').getAttribute('data-state'), { timeout: 2000, ...POLL }).toBe('offline')
    expect((await seen(page)).stale).toBe(true)

    // Meanwhile the train is lifted off the up departure by hand.
    await device.publishAsync(`${PREFIX}detector/D04`, '0')
    await onEvery(s => expect(s).toMatchObject({ occupied: { UM4: false }, berths: { UM4: null } }), PUBLISH_TO_PANEL_MS, panels().slice(0, 2))
    const away = await seen(page)
    expect(away.occupied.UM4).toBe(true)
    expect(away.berths.UM4).toBe('1F42')
    expect(await page.getByTestId('connection').textContent()).toContain('Offline')

    relay.restore()
    await context.setOffline(false)
    await onEvery((s) => {
      expect(s.connection).toBe('live')
      expect(s.stale).toBe(false)
      expect(s.occupied.UM4).toBe(false)
      expect(s.berths.UM4).toBeNull()
    }, PUBLISH_TO_PANEL_MS, [{ who: 'viewer', page }])

    // A second cut without the browser noticing (the server side of the link goes): it retries by itself.
    const connections = relay.accepted
    relay.cut()
    await expect.poll(() => page.getByTestId('connection').getAttribute('data-state'), { timeout: 2000, ...POLL }).toMatch(/reconnecting|offline/)
    await device.publishAsync(`${PREFIX}detector/D04`, '1')
    await onEvery(s => expect(s.occupied.UM4).toBe(true), PUBLISH_TO_PANEL_MS, panels().slice(0, 2))
    expect((await seen(page)).occupied.UM4).toBe(false)
    relay.restore()
    await onEvery(s => expect(s).toMatchObject({ connection: 'live', occupied: { UM4: true } }), 10_000, [{ who: 'viewer', page }])
    expect(relay.accepted).toBeGreaterThan(connections)
    await device.publishAsync(`${PREFIX}detector/D04`, '0')
    await onEvery(s => expect(s.occupied.UM4).toBe(false), PUBLISH_TO_PANEL_MS)
  })

  it('A sets SU3 back to auto and releases the main line: everyone sees it free again', async () => {
    const { page } = a
    await page.getByTestId('signal-SU3').click()
    const sheet = page.getByTestId('signal-sheet')
    await sheet.getByTestId('set-auto').click()
    await onEvery((s) => {
      expect(s.overrides.SU3).toBe('auto')
      expect(s.held).toEqual([])
    })
    await sheet.getByTestId('sheet-close').click()
    await page.getByTestId('area-main').getByTestId('release').click()
    await onEvery((s) => {
      expect(s.holders.main).toBe('not held')
      expect(s.occupied).toMatchObject({ UM1: false, UM2: false, UM3: false, UM4: false })
    })
    expect(pageErrors).toEqual([])
  })
})
