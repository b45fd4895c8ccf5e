import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import fc from 'fast-check'
import mqtt, { type MqttClient } from 'mqtt'
import demo from '#shared/layouts/demo-layout.json' with { type: 'json' }
import { computeIndications, initialState, validateLayout } from '#shared/signalling'
import { BASE_URL } from '../support/http-client'
import { LiveClient } from '../support/live-client'

// Thousands of random MQTT payloads and WebSocket messages: the server stays up, answers, and its state
// stays consistent (the indications it reports are the ones the engine computes from its own state).
await setup({ host: BASE_URL })

const MQTT_URL = process.env.BLOCKBELL_TEST_MQTT_URL ?? 'mqtt://127.0.0.1:18839'
const PREFIX = 'blockbell/v1/wrenfold/'
const checked = validateLayout(demo)
if (!checked.ok) throw new Error('demo layout does not validate')
const layout = checked.layout
const detectors = layout.blocks.flatMap(b => b.detectors)

const topic = fc.oneof(
  fc.constantFrom(...detectors).map(d => `${PREFIX}detector/${d}`),
  fc.constantFrom(...layout.turnouts.map(t => t.id), 'T99').map(t => `${PREFIX}turnout/${t}`),
  // eslint-disable-next-line no-control-regex -- MQTT topics cannot hold U+0000
  fc.string({ maxLength: 12 }).map(s => `${PREFIX}detector/${s.replace(/[+#/\u0000]/g, '') || 'x'}`),
  fc.constantFrom(`${PREFIX}device/fake-layout/status`, 'blockbell/v1/nowhere/detector/D01', `${PREFIX}signal/SU1`),
)
const payload = fc.oneof(
  fc.constantFrom('1', '0', 'normal', 'reverse', 'online', 'offline', '{"occupied":true}', '{"position":"reverse"}', 'null', '[]', '{}'),
  fc.json(),
  fc.string({ maxLength: 64 }),
  fc.uint8Array({ maxLength: 2048 }).map(a => Buffer.from(a)),
)
const wsMessage = fc.oneof(
  fc.json().map(j => j as unknown),
  fc.string({ maxLength: 200 }),
  fc.record({ type: fc.constantFrom('command', 'subscribe', 'resync', 'ping', 'nope'), id: fc.string(), command: fc.anything(), layout: fc.string() }),
  fc.record({ type: fc.constant('command'), id: fc.string({ minLength: 1, maxLength: 8 }), command: fc.record({ action: fc.constantFrom('set-override', 'set-turnout', 'take-area', 'interpose', 'acknowledge', 'hand-over'), signal: fc.string(), mode: fc.string(), revision: fc.integer(), area: fc.string(), block: fc.string(), description: fc.string(), to: fc.integer() }) }),
)

describe('fuzz', () => {
  let device: MqttClient
  beforeAll(async () => { device = await mqtt.connectAsync(MQTT_URL, { username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo' }) })
  afterAll(async () => {
    for (const d of detectors) await device.publishAsync(`${PREFIX}detector/${d}`, '0')
    await device.publishAsync(`${PREFIX}device/fake-layout/status`, '', { retain: true })
    await new Promise(resolve => setTimeout(resolve, 600))
    await device.endAsync()
  })

  it('survives 3,000 random MQTT messages with a consistent state', async () => {
    const messages = fc.sample(fc.tuple(topic, payload), { numRuns: 3000, seed: 20261201 })
    for (const [t, p] of messages) device.publish(t, typeof p === 'string' ? p : Buffer.isBuffer(p) ? p : JSON.stringify(p))
    await new Promise(resolve => setTimeout(resolve, 1500))
    expect((await fetch(`${BASE_URL}/api/health`)).status).toBe(200)
    const panel = await LiveClient.as('viewer')
    const { state } = await panel.snapshot()
    const rebuilt = { ...initialState(layout), occupied: state.occupied, turnouts: state.turnouts, overrides: state.overrides }
    expect(state.indications).toEqual(computeIndications(layout, rebuilt))
    panel.close()
  })

  it('survives 2,000 random WebSocket messages: every bad one gets an error, the connection stays up', async () => {
    const panel = await LiveClient.as('signaller')
    const before = (await panel.snapshot()).state
    for (const message of fc.sample(wsMessage, { numRuns: 2000, seed: 1201 })) {
      panel.send(typeof message === 'string' ? message : JSON.stringify(message))
    }
    await new Promise(resolve => setTimeout(resolve, 2500)) // let the rate limit refill
    const since = panel.messages.length
    panel.send({ type: 'ping' })
    expect(await panel.next(m => m.type === 'pong', 3000, since)).toBeTruthy()
    expect(panel.messages.filter(m => m.type === 'error').length).toBeGreaterThan(100)
    const after = (await panel.snapshot()).state
    // The signaller holds no area, so no random command could change a signal or a turnout.
    expect(after.overrides).toEqual(before.overrides)
    expect(after.signalRevisions).toEqual(before.signalRevisions)
    panel.close()
  })
})
