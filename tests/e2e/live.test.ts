import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import mqtt, { type MqttClient } from 'mqtt'
import { BASE_URL, signedIn } from '../support/http-client'
import { LiveClient, upgradeStatus } from '../support/live-client'

// The whole live path on the real stack: the server's embedded broker, the bridge, the engine, the
// WebSocket channel and PostgreSQL (server started by scripts/test.sh).
await setup({ host: BASE_URL })

const MQTT_URL = process.env.BLOCKBELL_TEST_MQTT_URL ?? 'mqtt://127.0.0.1:18839'
const PREFIX = 'blockbell/v1/wrenfold/'
const DEVICE = { username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo' }
const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

let device: MqttClient
beforeAll(async () => { device = await mqtt.connectAsync(MQTT_URL, { ...DEVICE, clientId: 'test-device' }) })
afterAll(async () => { await device?.endAsync() })

const detector = (id: string, value: string) => device.publishAsync(`${PREFIX}detector/${id}`, value)

describe('WebSocket upgrade', () => {
  it('is refused without a session cookie (401)', async () => {
    expect(await upgradeStatus({ origin: BASE_URL })).toBe(401)
  })
  it('is refused from a foreign Origin even with a valid session (403)', async () => {
    const http = await signedIn('viewer')
    expect(await upgradeStatus({ origin: 'http://evil.example', cookie: http.cookieHeader })).toBe(403)
    expect(await upgradeStatus({ cookie: http.cookieHeader })).toBe(403)
  })
  it('is accepted from our own Origin with a session, and subscribing gives a snapshot', async () => {
    const panel = await LiveClient.as('viewer')
    const snapshot = await panel.snapshot()
    expect(snapshot.definition.blocks.length).toBe(16)
    expect(Object.keys(snapshot.state.indications)).toContain('SU1')
    expect(Object.keys(snapshot.areas).sort()).toEqual(['branch', 'main'])
    expect(snapshot.operators.map(o => o.role)).toContain('viewer')
    panel.close()
  })
})

describe('MQTT broker', () => {
  it('refuses anonymous clients and wrong passwords outside demo mode', async () => {
    await expect(mqtt.connectAsync(MQTT_URL, { reconnectPeriod: 0, connectTimeout: 3000 })).rejects.toThrow()
    await expect(mqtt.connectAsync(MQTT_URL, { username: 'fake-layout', password: 'wrong', reconnectPeriod: 0, connectTimeout: 3000 })).rejects.toThrow()
  })
})

describe('detector to panel', () => {
  it('delivers a detector publish as a delta with the right indications, and publishes the retained aspect', async () => {
    const panel = await LiveClient.as('viewer')
    const block = panel.change(c => c.type === 'block' && c.block === 'UM2')
    const indication = panel.change(c => c.type === 'indication' && c.signal === 'SU1')
    await detector('D02', '1')
    expect(await block).toMatchObject({ type: 'block', block: 'UM2', occupied: true })
    expect(await indication).toMatchObject({ indication: { aspect: 'danger' } })
    // A decoder that connects later gets the current aspect at once (retained).
    const decoder = await mqtt.connectAsync(MQTT_URL, { ...DEVICE, clientId: 'test-decoder' })
    const retained = new Promise<string>(resolve => decoder.on('message', (_t, p) => resolve(String(p))))
    await decoder.subscribeAsync(`${PREFIX}signal/SU1`)
    expect(JSON.parse(await retained)).toMatchObject({ aspect: 'danger', override: 'auto' })
    await decoder.endAsync()
    await detector('D02', '0')
    await panel.change(c => c.type === 'block' && c.block === 'UM2' && !c.occupied)
    panel.close()
  })

  it('numbers deltas in sequence after the snapshot', async () => {
    const panel = await LiveClient.as('viewer')
    const snapshot = panel.messages.find(m => m.type === 'snapshot')!
    await detector('D01', '1')
    const delta = await panel.next(m => m.type === 'delta')
    expect(delta.type === 'delta' && delta.seq).toBe(snapshot.type === 'snapshot' && snapshot.seq + 1)
    const cleared = panel.change(c => c.type === 'block' && c.block === 'UM1' && !c.occupied)
    await detector('D01', '0')
    await cleared
    panel.close()
  })

  it('drops malformed payloads and unknown ids, leaving the state untouched', async () => {
    const panel = await LiveClient.as('viewer')
    const before = (await panel.snapshot()).state
    for (const payload of ['banana', '2', '{"occupied":"yes"}', '', '{"occupied":true,"extra":1}', '\u00ff\u00fe']) await detector('D05', payload)
    await detector('D99', '1')
    await device.publishAsync(`${PREFIX}turnout/T1`, 'sideways')
    await device.publishAsync(`${PREFIX}turnout/T99`, 'normal')
    await sleep(400)
    const after = (await panel.snapshot()).state
    expect(after.occupied).toEqual(before.occupied)
    expect(after.turnouts).toEqual(before.turnouts)
    expect(after.indications).toEqual(before.indications)
    panel.close()
  })

  it('holds a detector clear for the debounce time: a quick clear-then-occupied is a dropout, not a change', async () => {
    const panel = await LiveClient.as('viewer')
    await detector('D06', '1')
    await panel.change(c => c.type === 'block' && c.block === 'DM2' && c.occupied)
    const dropout = panel.change(c => c.type === 'dropout' && c.block === 'DM2')
    await detector('D06', '0')
    await sleep(50)
    await detector('D06', '1')
    expect(await dropout).toMatchObject({ detector: 'D06' })
    expect((await panel.snapshot()).state.occupied.DM2).toBe(true)
    await detector('D06', '0')
    await panel.change(c => c.type === 'block' && c.block === 'DM2' && !c.occupied, 3000)
    panel.close()
  })

  it('shows which controllers are online or offline', async () => {
    const panel = await LiveClient.as('viewer')
    const offline = panel.change(c => c.type === 'device' && c.device === 'fake-layout' && !c.status.online)
    await device.publishAsync(`${PREFIX}device/fake-layout/status`, 'offline', { retain: true })
    await offline
    expect((await panel.snapshot()).devices['fake-layout']?.online).toBe(false)
    await device.publishAsync(`${PREFIX}device/fake-layout/status`, '', { retain: true })
    panel.close()
  })
})

describe('commands', () => {
  let a: LiveClient, b: LiveClient, viewer: LiveClient, admin: LiveClient
  beforeAll(async () => {
    a = await LiveClient.as('signaller')
    b = await LiveClient.as('signaller2')
    viewer = await LiveClient.as('viewer')
    admin = await LiveClient.as('admin')
  })
  afterAll(async () => {
    for (const area of ['main', 'branch']) await admin.command({ action: 'force-release', area })
    for (const c of [a, b, viewer, admin]) c?.close()
  })

  it('lets a signaller take a free area, and refuses it to a viewer and to a second signaller', async () => {
    expect(await viewer.command({ action: 'take-area', area: 'main' })).toMatchObject({ ok: false, reason: 'You are signed in as a viewer: you can watch, not operate.' })
    const seen = viewer.change(c => c.type === 'areas')
    expect(await a.command({ action: 'take-area', area: 'main' })).toEqual({ type: 'command-result', id: expect.any(String), ok: true })
    expect(await seen).toMatchObject({ areas: { main: { name: 'Tam Oakridge' } } })
    expect(await b.command({ action: 'take-area', area: 'main' })).toMatchObject({ ok: false, reason: expect.stringMatching(/held by Tam Oakridge/) })
  })

  it('lets only the holder set a signal in the area', async () => {
    const rev = (await a.snapshot()).state.signalRevisions.SU3!
    expect(await b.command({ action: 'set-override', signal: 'SU3', mode: 'hold', revision: rev })).toMatchObject({ ok: false, reason: expect.stringMatching(/Tam Oakridge holds Main line/) })
    expect(await viewer.command({ action: 'set-override', signal: 'SU3', mode: 'hold', revision: rev })).toMatchObject({ ok: false, reason: 'You are signed in as a viewer: you can watch, not operate.' })
    const onViewer = viewer.change(c => c.type === 'indication' && c.signal === 'SU3')
    expect(await a.command({ action: 'set-override', signal: 'SU3', mode: 'hold', revision: rev })).toMatchObject({ ok: true })
    expect(await onViewer).toMatchObject({ indication: { aspect: 'danger', override: 'hold' } })
  })

  it('lets exactly one of two commands made against the same revision win; both panels see the result', async () => {
    const second = await LiveClient.open((await signedIn('signaller')).cookieHeader)
    await second.subscribe('wrenfold')
    const rev = (await a.snapshot()).state.signalRevisions.SU3!
    const [r1, r2] = await Promise.all([
      a.command({ action: 'set-override', signal: 'SU3', mode: 'clear', revision: rev }),
      second.command({ action: 'set-override', signal: 'SU3', mode: 'auto', revision: rev }),
    ])
    expect([r1.ok, r2.ok].filter(Boolean)).toHaveLength(1)
    const loser = r1.ok ? r2 : r1
    expect(loser.ok === false && loser.reason).toMatch(/changed meanwhile/)
    const [sa, sb] = [await a.snapshot(), await second.snapshot()]
    expect(sa.state.overrides.SU3).toBe(r1.ok ? 'clear' : 'auto')
    expect(sb.state.overrides.SU3).toBe(sa.state.overrides.SU3)
    second.close()
  })

  it('raises an alarm on every panel when a train passes a held signal; one acknowledgement clears it everywhere', async () => {
    const rev = (await a.snapshot()).state.signalRevisions.SU3!
    expect(await a.command({ action: 'set-override', signal: 'SU3', mode: 'hold', revision: rev })).toMatchObject({ ok: true })
    await detector('D03', '1')
    await a.change(c => c.type === 'block' && c.block === 'UM3' && c.occupied)
    const alarms = [a, b, viewer].map(p => p.change(c => c.type === 'alarm'))
    await detector('D04', '1')
    const raised = await Promise.all(alarms)
    for (const change of raised) expect(change).toMatchObject({ alarm: { signal: 'SU3', block: 'UM4', acknowledgedAt: null } })
    const id = (raised[0] as { alarm: { id: string } }).alarm.id
    expect(await viewer.command({ action: 'acknowledge', alarm: id })).toMatchObject({ ok: false, reason: 'You are signed in as a viewer: you can watch, not operate.' })
    const acks = [a, viewer].map(p => p.change(c => c.type === 'alarm-acknowledged'))
    expect(await b.command({ action: 'acknowledge', alarm: id })).toMatchObject({ ok: true })
    for (const ack of await Promise.all(acks)) expect(ack).toMatchObject({ alarm: { id, acknowledgedBy: expect.any(String) } })
    expect(await a.command({ action: 'acknowledge', alarm: id })).toMatchObject({ ok: false, reason: 'That alarm has already been acknowledged.' })
    await detector('D03', '0')
    await detector('D04', '0')
    const rev2 = (await a.snapshot()).state.signalRevisions.SU3!
    await a.command({ action: 'set-override', signal: 'SU3', mode: 'auto', revision: rev2 })
  })

  it('hands an area over once the receiver accepts, and lets only an admin force-release', async () => {
    const welcome = b.messages.find(m => m.type === 'welcome') as { user: { id: number } }
    expect(await a.command({ action: 'hand-over', area: 'main', to: welcome.user.id })).toMatchObject({ ok: true })
    const offered = await a.snapshot()
    expect(offered.areas.main?.name).toBe('Tam Oakridge')
    expect(offered.offers?.main).toMatchObject({ to: { name: 'Rhea Lintwhistle' } })
    expect(await b.command({ action: 'accept-hand-over', area: 'main' })).toMatchObject({ ok: true })
    expect((await a.snapshot()).areas.main?.name).toBe('Rhea Lintwhistle')
    expect(await a.command({ action: 'force-release', area: 'main' })).toMatchObject({ ok: false, reason: 'Only an admin can force-release an area.' })
    expect(await admin.command({ action: 'force-release', area: 'main' })).toMatchObject({ ok: true })
    expect((await viewer.snapshot()).areas.main).toBeNull()
  })

  it('answers a bad message with an error naming the problem, and keeps the connection', async () => {
    const first = viewer.messages.length
    viewer.send('not json')
    expect(await viewer.next(m => m.type === 'error' && /not valid JSON/.test(m.message), 2000, first)).toBeTruthy()
    const since = viewer.messages.length
    viewer.send({ type: 'command', id: 'x', command: { action: 'set-override', signal: 'SU3', mode: 'sideways', revision: 0 } })
    const error = await viewer.next(m => m.type === 'error', 2000, since)
    expect(error.type === 'error' && error.message).toMatch(/command\.mode/)
    viewer.send({ type: 'ping' })
    expect(await viewer.next(m => m.type === 'pong', 2000, since)).toBeTruthy()
  })

  it('sends every panel a heartbeat with the server clock at least every 2 s', async () => {
    const since = viewer.messages.length
    const first = await viewer.next(m => m.type === 'heartbeat', 2000, since)
    const second = await viewer.next(m => m.type === 'heartbeat' && m !== first, 2000, viewer.messages.indexOf(first) + 1)
    if (first.type !== 'heartbeat' || second.type !== 'heartbeat') throw new Error('heartbeat expected')
    expect(second.at - first.at).toBeLessThanOrEqual(2000)
    expect(Math.abs(second.at - Date.now())).toBeLessThan(2000)
  })

  it('refuses a command that reaches the server more than 5 s after it was made, and does nothing', async () => {
    const before = await b.snapshot()
    const since = b.messages.length
    b.send({ type: 'command', id: 'late-1', command: { action: 'take-area', area: 'branch' }, madeAt: Date.now() - 9000 })
    const result = await b.next(m => m.type === 'command-result' && m.id === 'late-1', 2000, since)
    expect(result).toMatchObject({ ok: false, reason: expect.stringMatching(/^Not done: this command reached the server 9 s after you made it/) })
    expect((await b.snapshot()).areas.branch).toEqual(before.areas.branch)
  })
})
