import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
// mqtt-packet (the MQTT codec mqtt.js and aedes use) writes the reference packets the guard must frame.
import mqttPacket from 'mqtt-packet'
import { devicePublishAllowed, deviceRetainAllowed, deviceSubscribeAllowed, type BrokerIdentity } from '../../../server/live/device-access'
import { DeviceSignInGuard } from '../../../server/live/device-sign-in'
import { mqttPacketSizeGuard } from '../../../server/live/mqtt-packet-limit'

const publish = (payloadBytes: number, topic = 'blockbell/v1/wrenfold/detector/D01'): Buffer =>
  mqttPacket.generate({ cmd: 'publish', topic, payload: Buffer.alloc(payloadBytes, 0x31), qos: 0, retain: false, dup: false })

describe('MQTT packet size guard', () => {
  it('passes packets up to the limit and stops one announcing more, whatever the chunking (fuzz)', () => {
    const LIMIT = 2000
    fc.assert(fc.property(fc.array(fc.integer({ min: 0, max: 4000 }), { minLength: 1, maxLength: 6 }), fc.integer({ min: 1, max: 700 }), (sizes, chunk) => {
      const stream = Buffer.concat(sizes.map(n => publish(n)))
      const guard = mqttPacketSizeGuard(LIMIT)
      let ok = true
      for (let i = 0; i < stream.length && ok; i += chunk) ok = guard(stream.subarray(i, i + chunk))
      // Remaining length = topic length field (2) + topic + payload (MQTT 3.1.1 §3.3).
      const tooBig = sizes.some(n => 2 + 'blockbell/v1/wrenfold/detector/D01'.length + n > LIMIT)
      expect(ok).toBe(!tooBig)
    }), { numRuns: 500 })
  })

  it('stops a CONNECT announcing 200 MB from its first five bytes', () => {
    const header = Buffer.from([0x10, 0x80, 0x80, 0x80, 0x60]) // remaining length 201,326,592
    expect(mqttPacketSizeGuard(16 * 1024)(header)).toBe(false)
  })

  it('passes a real CONNECT, SUBSCRIBE and PINGREQ', () => {
    const guard = mqttPacketSizeGuard(16 * 1024)
    expect(guard(mqttPacket.generate({ cmd: 'connect', protocolId: 'MQTT', protocolVersion: 4, clean: true, clientId: 'board-7', keepalive: 60, username: 'board-7', password: Buffer.from('secret') }))).toBe(true)
    expect(guard(mqttPacket.generate({ cmd: 'subscribe', messageId: 1, subscriptions: [{ topic: 'blockbell/v1/wrenfold/signal/+', qos: 1 }] }))).toBe(true)
    expect(guard(mqttPacket.generate({ cmd: 'pingreq' }))).toBe(true)
  })
})

describe('device permissions', () => {
  const board: BrokerIdentity = { kind: 'device', username: 'board-7', layout: 'wrenfold' }
  const everyLayout: BrokerIdentity = { kind: 'device', username: 'fake-layout', layout: null }
  const P = 'blockbell/v1/wrenfold/'

  it('lets a device subscribe to its layout\'s indications, turnout requests and held areas only', () => {
    for (const ok of [`${P}signal/+`, `${P}signal/SU1`, `${P}turnout/+/set`, `${P}turnout/T1/set`, `${P}area/+`, `${P}area/main`]) expect(deviceSubscribeAllowed(ok, board), ok).toBe(true)
    for (const no of ['#', '$SYS/#', 'blockbell/#', `${P}#`, `${P}detector/+`, `${P}device/+/status`, `${P}turnout/+`, 'blockbell/v1/+/signal/+', 'blockbell/v1/marrow/signal/+', `${P}signal/#`, `${P}signal/+/x`, `${P}area/#`, `${P}area/main/x`]) {
      expect(deviceSubscribeAllowed(no, board), no).toBe(false)
    }
    expect(deviceSubscribeAllowed('blockbell/v1/+/signal/+', everyLayout)).toBe(true)
    expect(deviceSubscribeAllowed('blockbell/v1/#', everyLayout)).toBe(false)
  })

  it('lets a device publish its layout\'s reports and only its own status', () => {
    expect(devicePublishAllowed(`${P}detector/D01`, board)).toBe(true)
    expect(devicePublishAllowed(`${P}turnout/T1`, board)).toBe(true)
    expect(devicePublishAllowed(`${P}device/board-7/status`, board)).toBe(true)
    expect(devicePublishAllowed(`${P}device/board-8/status`, board)).toBe(false)
    expect(devicePublishAllowed(`${P}signal/SU1`, board)).toBe(false)
    expect(devicePublishAllowed(`${P}turnout/T1/set`, board)).toBe(false)
    expect(devicePublishAllowed('blockbell/v1/marrow/detector/D01', board)).toBe(false)
    expect(devicePublishAllowed('blockbell/v1/marrow/detector/D01', everyLayout)).toBe(true)
  })

  it('keeps retained messages on turnout positions and device status only', () => {
    expect(deviceRetainAllowed(`${P}turnout/T1`)).toBe(true)
    expect(deviceRetainAllowed(`${P}device/board-7/status`)).toBe(true)
    expect(deviceRetainAllowed(`${P}detector/D01`)).toBe(false)
  })
})

describe('device sign-in throttle', () => {
  const slowCheck = (right: boolean, log: string[]) => () => new Promise<boolean>((resolve) => {
    log.push('start')
    setTimeout(() => { log.push('end'); resolve(right) }, 5)
  })

  it('checks one password at a time and refuses the rest of a parallel flood at once', async () => {
    const guard = new DeviceSignInGuard({ windowMs: 60_000, perPair: 1000, perAddress: 1000, perUsername: 1000, maxWaiting: 4 })
    const log: string[] = []
    const results = await Promise.all(Array.from({ length: 100 }, (_, i) => guard.attempt(`guess-${i}`, '192.0.2.7', slowCheck(false, log))))
    expect(results.filter(r => r === 'wrong')).toHaveLength(4)
    expect(results.filter(r => r === 'busy')).toHaveLength(96)
    expect(log.join(',')).toBe('start,end,start,end,start,end,start,end') // never two at once
  })

  it('throttles a name from one address, then the address, then (more slowly) the name everywhere, failures in progress included', async () => {
    let now = 1_000_000
    const guard = new DeviceSignInGuard({ windowMs: 60_000, perPair: 3, perAddress: 5, perUsername: 6, maxWaiting: 100 }, () => now)
    const log: string[] = []
    const first = await Promise.all(Array.from({ length: 5 }, () => guard.attempt('board-7', '192.0.2.7', slowCheck(false, log))))
    expect(first).toEqual(['wrong', 'wrong', 'wrong', 'throttled', 'throttled'])
    expect(await guard.attempt('board-7', '192.0.2.7', slowCheck(true, log))).toBe('throttled')
    expect(await guard.attempt('board-7', '198.51.100.9', slowCheck(true, log))).toBe('ok') // the device itself, from its own address
    expect(await guard.attempt('board-8', '192.0.2.7', slowCheck(false, log))).toBe('wrong')
    expect(await guard.attempt('board-9', '192.0.2.7', slowCheck(false, log))).toBe('wrong')
    expect(await guard.attempt('board-10', '192.0.2.7', slowCheck(true, log))).toBe('throttled') // the address
    for (const address of ['203.0.113.1', '203.0.113.2', '203.0.113.3']) expect(await guard.attempt('board-7', address, slowCheck(false, log))).toBe('wrong')
    expect(await guard.attempt('board-7', '203.0.113.4', slowCheck(true, log))).toBe('throttled') // the name, from many addresses
    now += 60_001
    expect(await guard.attempt('board-7', '192.0.2.7', slowCheck(true, log))).toBe('ok')
  })

  it('does not count a check that could not be made (database away) as a wrong password', async () => {
    const guard = new DeviceSignInGuard({ windowMs: 60_000, perPair: 2, perAddress: 2, perUsername: 2, maxWaiting: 10 })
    for (let i = 0; i < 5; i++) expect(await guard.attempt('board-7', '192.0.2.7', () => Promise.reject(new Error('connection refused')))).toBe('unavailable')
    expect(await guard.attempt('board-7', '192.0.2.7', () => Promise.resolve(true))).toBe('ok')
  })
})
