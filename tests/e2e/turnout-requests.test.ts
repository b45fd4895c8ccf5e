import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import mqtt, { type MqttClient } from 'mqtt'
import { BASE_URL } from '../support/http-client'
import { LiveClient } from '../support/live-client'

// A throw request on the real stack (embedded broker, bridge, engine, WebSocket, PostgreSQL): only the position
// a turnout reports counts (docs/mqtt-topics.md), so with no device answering nothing moves and no signal
// clears for a route that is not set; a throw of a locked turnout is refused with its reason.
await setup({ host: BASE_URL })

const MQTT_URL = process.env.BLOCKBELL_TEST_MQTT_URL ?? 'mqtt://127.0.0.1:18839'
const PREFIX = 'blockbell/v1/wrenfold/'
const DEVICE = { username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo' }
const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

describe('turnout requests', () => {
  let device: MqttClient
  let watcher: MqttClient
  let rhea: LiveClient
  let admin: LiveClient
  const indications: Record<string, string> = {}
  const requests: string[] = []
  let restore: { SU2: string, SB3: string, T2: string }

  beforeAll(async () => {
    device = await mqtt.connectAsync(MQTT_URL, { ...DEVICE, clientId: `turnout-requests-device-${process.pid}` })
    watcher = await mqtt.connectAsync(MQTT_URL, { ...DEVICE, clientId: `turnout-requests-watcher-${process.pid}` })
    watcher.on('message', (topic, payload) => {
      const rel = topic.slice(PREFIX.length)
      if (rel.startsWith('signal/')) indications[rel.slice('signal/'.length)] = JSON.parse(payload.toString()).aspect
      else requests.push(`${rel} ${payload.toString()}`)
    })
    await watcher.subscribeAsync([`${PREFIX}signal/+`, `${PREFIX}turnout/+/set`])
    rhea = await LiveClient.as('signaller2')
    admin = await LiveClient.as('admin')
    const before = await rhea.snapshot()
    // T2 and SU2 lie on the Main line area, SB3 on the Branch: Rhea holds both
    for (const area of ['main', 'branch']) if (before.areas[area]) await admin.command({ action: 'force-release', area })
    restore = { SU2: before.state.overrides.SU2 ?? 'auto', SB3: before.state.overrides.SB3 ?? 'auto', T2: before.state.turnouts.T2 ?? 'unknown' }
    for (const area of ['main', 'branch']) expect(await rhea.command({ action: 'take-area', area })).toMatchObject({ ok: true })
    // SU2 and SB3 read into UM3, where T2 lies: held, so T2 can be set normal without a lock alarm
    for (const signal of ['SU2', 'SB3']) {
      const s = await rhea.snapshot()
      await rhea.command({ action: 'set-override', signal, mode: 'hold', revision: s.state.signalRevisions[signal] })
    }
    await device.publishAsync(`${PREFIX}turnout/T2`, 'normal', { retain: true })
    for (let i = 0; i < 50 && (await rhea.snapshot()).state.turnouts.T2 !== 'normal'; i++) await sleep(100)
    const s = await rhea.snapshot()
    await rhea.command({ action: 'set-override', signal: 'SB3', mode: 'auto', revision: s.state.signalRevisions.SB3 })
  })

  afterAll(async () => {
    let s = await rhea.snapshot()
    for (const signal of ['SU2', 'SB3']) {
      await rhea.command({ action: 'set-override', signal, mode: 'hold', revision: s.state.signalRevisions[signal] })
      s = await rhea.snapshot()
    }
    if (restore.T2 === 'reverse') await device.publishAsync(`${PREFIX}turnout/T2`, 'reverse', { retain: true })
    await sleep(300)
    s = await rhea.snapshot()
    for (const signal of ['SU2', 'SB3'] as const) {
      await rhea.command({ action: 'set-override', signal, mode: restore[signal], revision: s.state.signalRevisions[signal] })
      s = await rhea.snapshot()
    }
    for (const area of ['main', 'branch']) await rhea.command({ action: 'release-area', area })
    for (const c of [rhea, admin]) c?.close()
    await device?.endAsync()
    await watcher?.endAsync()
  })

  it('moves nothing while no device answers: T2 stays normal and SB3 stays at danger, on the panels and on MQTT', async () => {
    const s = await rhea.snapshot()
    expect(s.state.indications.SB3!.aspect).toBe('danger') // T2 normal: the branch route into UM3 is not set
    expect(await rhea.command({ action: 'set-turnout', turnout: 'T2', position: 'reverse', revision: s.state.turnoutRevisions.T2 })).toMatchObject({ ok: true })
    await expect.poll(() => requests).toContainEqual(`turnout/T2/set ${JSON.stringify({ position: 'reverse', by: 'Rhea Lintwhistle' })}`)
    await sleep(1500)
    const after = await admin.snapshot()
    expect(after.state.turnouts.T2).toBe('normal')
    expect(after.state.turnoutRevisions.T2).toBe(s.state.turnoutRevisions.T2)
    expect(after.state.indications.SB3!.aspect).toBe('danger')
    expect(indications.SB3).toBe('danger') // the retained indication the decoders get
    expect(after.feed.map(e => e.text)).toContain('Rhea Lintwhistle asked for T2 to be thrown reverse')
    // the report moves it, and only then SB3 clears
    const cleared = admin.change(c => c.type === 'indication' && c.signal === 'SB3')
    await device.publishAsync(`${PREFIX}turnout/T2`, 'reverse', { retain: true })
    expect(await cleared).toMatchObject({ indication: { aspect: expect.not.stringMatching(/^danger$/) } })
    await expect.poll(() => indications.SB3).not.toBe('danger')
    // back to normal the same way (SB3 held first: it reads over T2 now)
    let now = await rhea.snapshot()
    await rhea.command({ action: 'set-override', signal: 'SB3', mode: 'hold', revision: now.state.signalRevisions.SB3 })
    now = await rhea.snapshot()
    expect(await rhea.command({ action: 'set-turnout', turnout: 'T2', position: 'normal', revision: now.state.turnoutRevisions.T2 })).toMatchObject({ ok: true })
    await device.publishAsync(`${PREFIX}turnout/T2`, 'normal', { retain: true })
    await expect.poll(async () => (await rhea.snapshot()).state.turnouts.T2).toBe('normal')
  })

  it('refuses a throw of a turnout under a train, with the reason, and sends no request', async () => {
    await device.publishAsync(`${PREFIX}detector/D03`, '1') // a train on UM3, over T2
    await expect.poll(async () => (await rhea.snapshot()).state.occupied.UM3).toBe(true)
    const s = await rhea.snapshot()
    expect(s.state.locks.T2).toEqual({ reason: 'occupied', block: 'UM3' })
    const sent = requests.length
    expect(await rhea.command({ action: 'set-turnout', turnout: 'T2', position: 'reverse', revision: s.state.turnoutRevisions.T2 }))
      .toMatchObject({ ok: false, reason: 'T2 is locked: UM3 is occupied' })
    await sleep(300)
    expect(requests.length).toBe(sent)
    expect((await admin.snapshot()).feed.map(e => e.text)).toContain('Rhea Lintwhistle: throw of T2 to reverse refused. T2 is locked: UM3 is occupied')
    await device.publishAsync(`${PREFIX}detector/D03`, '0')
    await expect.poll(async () => (await rhea.snapshot()).state.occupied.UM3, { timeout: 3000 }).toBe(false)
  })
})
