import { describe, expect, it } from 'vitest'
import { parseIndication, parseTurnoutRequest, relativeTopic } from '../../../fake-hardware/messages'
import { parseOptions } from '../../../fake-hardware/options'
import { createRandom } from '../../../fake-hardware/random'

describe('parseOptions', () => {
  it('has defaults for the demo layout and the embedded broker', () => {
    const r = parseOptions([], {})
    expect(r).toEqual({
      ok: true,
      options: {
        layout: 'shared/layouts/demo-layout.json', slug: 'wrenfold', seed: null, trains: null, trainCount: 4, script: null,
        spadChance: 0.02, dropoutChance: 0.05, speedFactor: 1, ignoreSignals: false, turnoutMemory: null, stopAfterMs: null,
        mqttUrl: 'mqtt://127.0.0.1:18830', username: 'fake-layout', password: 'fake-layout-demo',
      },
    })
  })

  it('reads the environment, and the command line wins over it', () => {
    const env = { MQTT_URL: 'mqtt://broker.example:1883', BLOCKBELL_FAKE_MQTT_PASSWORD: 's3cret', BLOCKBELL_FAKE_SEED: '7', BLOCKBELL_FAKE_SPAD_CHANCE: '0.5', BLOCKBELL_FAKE_SLUG: 'other' }
    const r = parseOptions(['--seed', '9', '--speed-factor', '10', '--script', 'x.json', '--ignore-signals'], env)
    expect(r.ok && r.options).toMatchObject({ mqttUrl: 'mqtt://broker.example:1883', password: 's3cret', seed: 9, spadChance: 0.5, speedFactor: 10, script: 'x.json', slug: 'other', ignoreSignals: true })
    expect(parseOptions([], { MQTT_PORT: '18839' }).ok && (parseOptions([], { MQTT_PORT: '18839' }) as { options: { mqttUrl: string } }).options.mqttUrl).toBe('mqtt://127.0.0.1:18839')
  })

  it.each([
    [['--spad-chance', '2'], '--spad-chance (BLOCKBELL_FAKE_SPAD_CHANCE): "2" is not a chance from 0 to 1'],
    [['--seed=-1'], '--seed (BLOCKBELL_FAKE_SEED): "-1" is not a whole number'],
    [['--speed-factor', 'fast'], '--speed-factor (BLOCKBELL_FAKE_SPEED_FACTOR): "fast" is not a number above 0'],
    [['--slug', 'Wren Fold'], '--slug: "Wren Fold" is not a layout slug'],
    [['--colour', 'red'], 'Unknown option \'--colour\''],
  ])('refuses %j', (argv, message) => {
    const r = parseOptions(argv, {})
    expect(r.ok).toBe(false)
    if (!r.ok) expect(r.errors.join('\n')).toContain(message)
  })

  it('asks for the usage text with --help', () => {
    expect(parseOptions(['--help'], {})).toEqual({ ok: false, help: true, errors: [] })
  })
})

describe('messages from Blockbell', () => {
  it('reads the aspect of an indication and ignores anything else', () => {
    expect(parseIndication('{"aspect":"caution","indicator":null,"override":"auto","exceedsLine":false,"at":1}')).toBe('caution')
    for (const bad of ['', 'danger', '{"aspect":"green"}', '[1]', 'null', '{"aspect":1}']) expect(parseIndication(bad)).toBeNull()
  })

  it('reads a turnout request as JSON or as the bare word', () => {
    expect(parseTurnoutRequest('{"position":"reverse","by":"Tam Oakridge"}')).toEqual({ position: 'reverse', by: 'Tam Oakridge' })
    expect(parseTurnoutRequest('normal')).toEqual({ position: 'normal', by: null })
    for (const bad of ['', 'left', '{"position":"left"}', '{}', '1']) expect(parseTurnoutRequest(bad)).toBeNull()
  })

  it('strips the layout prefix from a topic', () => {
    expect(relativeTopic('blockbell/v1/wrenfold/', 'blockbell/v1/wrenfold/signal/SU1')).toBe('signal/SU1')
    expect(relativeTopic('blockbell/v1/wrenfold/', 'blockbell/v1/other/signal/SU1')).toBeNull()
  })
})

describe('createRandom', () => {
  it('repeats its numbers for a seed and stays in [0, 1)', () => {
    const a = createRandom(123)
    const b = createRandom(123)
    const xs = Array.from({ length: 1000 }, () => a.next())
    expect(Array.from({ length: 1000 }, () => b.next())).toEqual(xs)
    expect(xs.every(x => x >= 0 && x < 1)).toBe(true)
    // roughly uniform: each tenth of [0, 1) gets 5-15 % of 1000 draws
    for (let k = 0; k < 10; k++) {
      const n = xs.filter(x => x >= k / 10 && x < (k + 1) / 10).length
      expect(n).toBeGreaterThan(50)
      expect(n).toBeLessThan(150)
    }
    expect(createRandom(124).next()).not.toBe(xs[0])
  })
})
