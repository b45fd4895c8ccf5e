import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import mqtt, { type MqttClient } from 'mqtt'
import { BASE_URL, DEMO } from '../support/http-client'
import { openBrowser, screenshot, signInThroughForm, type BrowserSession } from '../support/browser'
import { LiveClient } from '../support/live-client'
import type { ServerMessage } from '#shared/live/protocol'

// Turnout locking on the Panel in Debian's chromium, on a touch context (a tablet beside the layout), against
// the real server and its broker; this test plays the layout's hardware over MQTT. Locking rule: 49 CFR
// 236.207 / 236.314 [P] and detector (track) locking [M], REFERENCES.md §10.

const MQTT_URL = process.env.BLOCKBELL_TEST_MQTT_URL ?? 'mqtt://127.0.0.1:18839'
const PREFIX = 'blockbell/v1/wrenfold/'
const DEVICE = { username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo' }
const POLL = { interval: 50, timeout: 3000 }
type Snapshot = Extract<ServerMessage, { type: 'snapshot' }>

describe('a locked turnout on a tablet (Debian chromium, touch)', () => {
  let admin: BrowserSession
  let device: MqttClient
  let before: Snapshot
  const requests: { topic: string, payload: string }[] = []
  const problems: string[] = []

  beforeAll(async () => {
    const watcher = await LiveClient.as('viewer')
    before = watcher.messages.find((m): m is Snapshot => m.type === 'snapshot')!
    watcher.close()
    if (Object.values(before.areas).some(h => h)) throw new Error('an area is held when the locking test starts')
    // an alarm another test left open is acknowledged first: this test counts the alarms it raises itself
    const left = before.state.alarms.filter(a => a.acknowledgedAt === null)
    if (left.length) {
      console.log(`acknowledging ${left.length} alarm(s) left open: ${JSON.stringify(left)}`)
      const clearer = await LiveClient.as('admin')
      for (const a of left) await clearer.command({ action: 'acknowledge', alarm: a.id })
      clearer.close()
    }
    if (before.state.occupied.UM4 || before.state.occupied.FY1) throw new Error('UM4 or FY1 is occupied when the locking test starts')
    device = await mqtt.connectAsync(MQTT_URL, { ...DEVICE, clientId: `locking-test-${process.pid}` })
    await device.subscribeAsync(`${PREFIX}turnout/+/set`)
    device.on('message', (topic, payload) => requests.push({ topic: topic.slice(PREFIX.length), payload: payload.toString() }))
    if (before.state.turnouts.T4 !== 'normal') await device.publishAsync(`${PREFIX}turnout/T4`, 'normal', { retain: true })
    admin = await openBrowser({ width: 1024, height: 768 }, { touch: true })
    admin.page.on('pageerror', e => problems.push(e.message))
    admin.page.on('console', (m) => { if (m.type() === 'error' || /hydration/i.test(m.text())) problems.push(m.text()) })
    await signInThroughForm(admin.page, DEMO.admin.email, DEMO.admin.password)
    await admin.page.waitForURL('**/panel')
    await admin.page.goto(`${BASE_URL}/panel/wrenfold`)
    await admin.page.locator('[data-test="connection"][data-state="live"]').waitFor({ timeout: 10_000 })
  })

  afterAll(async () => {
    // back as found: SU3 held while T4 goes back to normal (so that raises no alarm), then auto again
    const ada = await LiveClient.as('admin')
    await ada.command({ action: 'take-area', area: 'main' })
    let s = (await ada.snapshot()).state
    await ada.command({ action: 'set-override', signal: 'SU3', mode: 'hold', revision: s.signalRevisions.SU3 })
    await device?.publishAsync(`${PREFIX}detector/D04`, '0')
    await new Promise(resolve => setTimeout(resolve, 800)) // the server holds a clear for its debounce time
    await device?.publishAsync(`${PREFIX}turnout/T4`, before?.state.turnouts.T4 === 'reverse' ? 'reverse' : 'normal', { retain: true })
    await new Promise(resolve => setTimeout(resolve, 300))
    s = (await ada.snapshot()).state
    for (const alarm of s.alarms.filter(a => a.acknowledgedAt === null)) await ada.command({ action: 'acknowledge', alarm: alarm.id })
    await ada.command({ action: 'set-override', signal: 'SU3', mode: before?.state.overrides.SU3 ?? 'auto', revision: s.signalRevisions.SU3 })
    await ada.command({ action: 'release-area', area: 'main' })
    ada.close()
    await admin?.close()
    await device?.endAsync()
  })

  it('a train on UM4 puts the lock mark on T4; a tap only opens its sheet, which says why and what to do', async () => {
    const { page } = admin
    if ((before.state.overrides.SU3 ?? 'auto') !== 'hold') {
      // SU3 reads over T4 (its section UM4 + FY1 is free): route-locked
      await expect.poll(() => page.getByTestId('lock-T4').getAttribute('data-reason'), POLL).toBe('route')
    }
    await device.publishAsync(`${PREFIX}detector/D04`, '1')
    await expect.poll(() => page.getByTestId('lock-T4').getAttribute('data-reason'), POLL).toBe('occupied')
    await page.getByTestId('turnout-T4').getByTestId('turnout-tag').tap()
    const sheet = page.getByTestId('turnout-sheet')
    await sheet.waitFor()
    expect(await sheet.getByTestId('lock-reason').textContent()).toContain('T4 is locked: UM4 is occupied')
    expect(await sheet.getByTestId('lock-advice').textContent()).toContain('Wait until it has cleared the block')
    expect(requests).toEqual([])
    await screenshot(page, 'locking-1024x768-locked-sheet')
  })

  it('the admin\'s forced throw asks first, sends nothing on cancel, and raises the alarm on every panel when T4 moves', async () => {
    const { page } = admin
    const sheet = page.getByTestId('turnout-sheet')
    const viewer = await LiveClient.as('viewer')
    await sheet.getByTestId('force-reverse').tap()
    expect(await sheet.getByTestId('force-confirm').textContent()).toContain('Force T4 to reverse although it is locked?')
    await sheet.getByTestId('force-no').tap()
    expect(await sheet.getByTestId('force-confirm').count()).toBe(0)
    await new Promise(resolve => setTimeout(resolve, 300))
    expect(requests).toEqual([])
    await sheet.getByTestId('force-reverse').tap()
    await sheet.getByTestId('force-yes').tap()
    await expect.poll(() => requests.length, POLL).toBe(1)
    expect(requests[0]).toEqual({ topic: 'turnout/T4/set', payload: JSON.stringify({ position: 'reverse', by: 'Ada Wrenfield' }) })
    // asked for, not thrown: the diagram still shows normal until the turnout reports
    await expect.poll(() => sheet.getByTestId('throw-waiting').count(), POLL).toBe(1)
    expect(await page.getByTestId('turnout-T4').getAttribute('data-position')).toBe('normal')
    // the request goes out on MQTT before the journal's feed entry reaches this panel: wait for it
    await expect.poll(() => page.getByTestId('feed').textContent(), POLL).toContain('Ada Wrenfield forced T4 to reverse although UM4 is occupied')
    const alarm = viewer.change(c => c.type === 'alarm')
    await device.publishAsync(`${PREFIX}turnout/T4`, 'reverse', { retain: true })
    expect(await alarm).toMatchObject({ alarm: { kind: 'turnout-under-lock', turnout: 'T4', block: 'UM4', signal: null } })
    viewer.close()
    await expect.poll(() => page.getByTestId('alarm-banner').textContent(), POLL).toContain('Turnout T4 moved while locked: Up departure (UM4) was occupied.')
    expect(await page.getByTestId('turnout-T4').getAttribute('data-position')).toBe('reverse')
    expect(await sheet.getByTestId('throw-waiting').count()).toBe(0)
    await screenshot(page, 'locking-1024x768-forced-alarm')
    expect(problems).toEqual([])
  })
})
