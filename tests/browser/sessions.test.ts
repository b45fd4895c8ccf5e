import { readFileSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import mqtt, { type MqttClient } from 'mqtt'
import { parse } from 'csv-parse/sync'
import { BASE_URL, DEMO, signedIn, type SessionClient } from '../support/http-client'
import { LiveClient } from '../support/live-client'
import { openBrowser, screenshot, signInThroughForm, type BrowserSession } from '../support/browser'

// A scripted session on Wrenfold Junction (detectors over MQTT, commands over the panel channel), ended,
// then reviewed in chromium as a viewer: summary, log filter, a tap on the graph, the replay slider, the CSV.
await setup({ host: BASE_URL })

const MQTT_URL = process.env.BLOCKBELL_TEST_MQTT_URL ?? 'mqtt://127.0.0.1:18839'
const PREFIX = 'blockbell/v1/wrenfold/'
const DEVICE = { username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo' }
const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

let device: MqttClient
let signaller: SessionClient
let panel: LiveClient
let browser: BrowserSession
let sessionId: number
const problems: string[] = []

beforeAll(async () => {
  device = await mqtt.connectAsync(MQTT_URL, { ...DEVICE, clientId: 'sessions-browser-device' })
  signaller = await signedIn('signaller')
  panel = await LiveClient.as('signaller')
  const detector = (id: string, v: '0' | '1') => device.publishAsync(`${PREFIX}detector/${id}`, v)
  for (const t of ['T1', 'T2', 'T3', 'T4', 'T5', 'T6', 'T7']) await device.publishAsync(`${PREFIX}turnout/${t}`, 'normal')
  for (const d of ['D01', 'D02', 'D03', 'D04']) await detector(d, '0')
  await sleep(600)
  expect(await panel.command({ action: 'take-area', area: 'main' })).toMatchObject({ ok: true })
  const started = await signaller.post('/api/sessions', { layout: 'wrenfold', name: 'Browser review evening', fastClockRatio: 4, fastClockStart: '07:00' })
  expect(started.status).toBe(201)
  sessionId = started.body.id
  await sleep(1500)
  await detector('D01', '1')
  await sleep(400)
  expect(await panel.command({ action: 'interpose', block: 'UM1', description: '1F42' })).toMatchObject({ ok: true })
  await sleep(1500)
  await detector('D02', '1')
  await sleep(1500)
  await detector('D01', '0')
  await detector('D03', '1')
  await sleep(1500)
  await detector('D02', '0')
  const rev = (await panel.snapshot()).state.signalRevisions.SU3!
  await panel.command({ action: 'set-override', signal: 'SU3', mode: 'hold', revision: rev })
  await sleep(1000)
  await detector('D04', '1')
  await sleep(1500)
  await detector('D03', '0')
  await sleep(1500)
  await detector('D04', '0')
  await sleep(800)
  const rev2 = (await panel.snapshot()).state.signalRevisions.SU3!
  await panel.command({ action: 'set-override', signal: 'SU3', mode: 'auto', revision: rev2 })
  for (const a of (await panel.snapshot()).state.alarms.filter(x => x.acknowledgedAt === null)) await panel.command({ action: 'acknowledge', alarm: a.id })
  await sleep(1000)
  expect((await signaller.post(`/api/sessions/${sessionId}/end`)).status).toBe(200)
  await sleep(500)
  browser = await openBrowser({ width: 1280, height: 800 })
  browser.page.on('console', (m) => { if (m.type() === 'error' || /hydration/i.test(m.text())) problems.push(m.text()) })
  browser.page.on('pageerror', e => problems.push(e.message))
}, 120_000)

afterAll(async () => {
  await panel?.command({ action: 'release-area', area: 'main' })
  panel?.close()
  await device?.endAsync()
  await browser?.close()
})

describe('reviewing a session in the browser', () => {
  it('lists the session, opens its review, filters the log, names a train from the graph, replays and downloads', async () => {
    const { page } = browser
    await signInThroughForm(page, DEMO.viewer.email, DEMO.viewer.password)
    await page.waitForURL('**/panel')
    await page.goto('/sessions')
    const row = page.getByTestId(`session-${sessionId}`)
    await expect.poll(() => row.textContent()).toContain('Browser review evening')
    await screenshot(page, 'sessions-list-1280')
    await row.getByRole('link').click()
    await page.waitForURL(`**/sessions/${sessionId}`)
    await expect.poll(() => page.getByTestId('summary-trains').textContent()).toContain('1F42')
    await expect.poll(() => page.getByTestId('summary-danger').textContent()).toContain('SU3')

    // the log, filtered on the server
    await page.getByTestId('log-row').first().waitFor()
    await page.getByLabel('Kind').selectOption('alarm')
    await page.getByTestId('log-apply').click()
    await expect.poll(() => page.getByTestId('log-row').count()).toBe(1)
    expect(await page.getByTestId('log-row').textContent()).toContain('SU3 passed at danger by 1F42 entering UM4')

    // a tap on the train's line names it and the time
    const graph = await (await fetch(`${BASE_URL}/api/sessions/${sessionId}/graph?route=UM1,UM2,UM3,UM4`, { headers: { cookie: (await signedIn('viewer')).cookieHeader } })).json()
    const canvas = page.getByTestId('session-graph').locator('canvas').first()
    await canvas.waitFor()
    const box = (await canvas.boundingBox())!
    const point = graph.trains.find((t: { description: string }) => t.description === '1F42').points.find(Boolean) as [number, number]
    const max = graph.route.reduce((m: number, b: { startMm: number, lengthMm: number }) => Math.max(m, b.startMm + b.lengthMm), 0)
    const x = 150 + (point[0] - graph.from) / (graph.to - graph.from) * (box.width - 174)
    const y = 36 + point[1] / max * (box.height - 106)
    await page.mouse.click(box.x + x, box.y + y)
    await expect.poll(() => page.getByTestId('graph-picked').textContent()).toMatch(/^Train 1F42 at \d\d:\d\d:\d\d/)
    await screenshot(page, 'session-review-1280')

    // the replay slider: the moment the train stood in UM4 differs from the start
    const slider = page.getByTestId('replay-slider')
    const block = page.getByTestId('session-replay').getByTestId('block-UM4')
    await block.waitFor()
    expect(await block.getAttribute('data-occupied')).toBe('false')
    // drawn at a size one can read: the diagram box is not squeezed to nothing
    const drawn = (await page.getByTestId('session-replay').getByTestId('diagram').boundingBox())!
    expect(drawn.height).toBeGreaterThan(250)
    expect((await block.boundingBox())!.width).toBeGreaterThan(20)
    const spadAt = Date.parse((await (await fetch(`${BASE_URL}/api/sessions/${sessionId}`, { headers: { cookie: (await signedIn('viewer')).cookieHeader } })).json()).session.summary.dangerPasses[0].at)
    await slider.evaluate((el, v) => {
      const input = el as HTMLInputElement
      input.value = String(v)
      input.dispatchEvent(new Event('input', { bubbles: true }))
    }, spadAt + 500)
    await expect.poll(() => block.getAttribute('data-occupied')).toBe('true')
    await page.getByTestId('session-replay').scrollIntoViewIfNeeded()
    await screenshot(page, 'session-replay-1280')

    // CSV download
    const download = page.waitForEvent('download')
    await page.getByTestId('csv').click()
    const file = await (await download).path()
    const records = parse(readFileSync(file!, 'utf8'), { columns: true }) as { kind: string }[]
    expect(records.length).toBe(1)
    expect(records[0]!.kind).toBe('alarm')

    await page.setViewportSize({ width: 1024, height: 768 })
    await screenshot(page, 'session-review-1024')
    expect(problems).toEqual([])
  })
})
