import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { createEngine, scaleSpeed } from '#shared/signalling'
import { parseScript, ScriptPlayer, unknownIds, type Scheduled } from '../../../fake-hardware/script'
import { demoLayout, ROOT } from './harness'

const scriptFile = (name: string): unknown => JSON.parse(readFileSync(new URL(`fake-hardware/scripts/${name}`, ROOT), 'utf8'))

function parsed(json: unknown, speedFactor = 1): Scheduled[] {
  const r = parseScript(json, speedFactor)
  if (!r.ok) throw new Error(r.errors.join('; '))
  return r.events
}

describe('parseScript', () => {
  it('keeps the file order and the times, retains turnouts, sends JSON payloads as text', () => {
    const events = parsed([
      { afterMs: 0, topic: 'turnout/T4', payload: 'normal' },
      { afterMs: 500, topic: 'detector/D01', payload: '1', note: '1F42 enters UM1' },
      { afterMs: 500, topic: 'detector/D02', payload: { occupied: true } },
      { afterMs: 1200, topic: 'detector/D01', payload: 0, retain: true },
    ])
    expect(events).toEqual([
      { dueMs: 0, topic: 'turnout/T4', payload: 'normal', retain: true, note: null },
      { dueMs: 500, topic: 'detector/D01', payload: '1', retain: false, note: '1F42 enters UM1' },
      { dueMs: 500, topic: 'detector/D02', payload: '{"occupied":true}', retain: false, note: null },
      { dueMs: 1200, topic: 'detector/D01', payload: '0', retain: true, note: null },
    ])
  })

  it('divides the times by the speed factor', () => {
    expect(parsed([{ afterMs: 1000, topic: 'detector/D01', payload: '1' }], 4)[0]!.dueMs).toBe(250)
  })

  it.each([
    ['an event earlier than the one above', [{ afterMs: 500, topic: 'detector/D01', payload: '1' }, { afterMs: 100, topic: 'detector/D01', payload: '0' }], '1.afterMs: afterMs 100 is before the event above (500)'],
    ['a negative time', [{ afterMs: -1, topic: 'detector/D01', payload: '1' }], '0.afterMs'],
    ['a wildcard topic', [{ afterMs: 0, topic: 'detector/+', payload: '1' }], 'wildcards'],
    ['a full topic', [{ afterMs: 0, topic: 'blockbell/v1/wrenfold/detector/D01', payload: '1' }], 'relative'],
    ['a missing payload', [{ afterMs: 0, topic: 'detector/D01' }], '0.payload'],
    ['not a list', { afterMs: 0 }, '(script)'],
  ])('refuses %s', (_, json, message) => {
    const r = parseScript(json)
    expect(r.ok).toBe(false)
    if (!r.ok) expect(r.errors.join('\n')).toContain(message)
  })
})

describe('ScriptPlayer', () => {
  it('hands out events in order as their times come, without timers', () => {
    const events = parsed([
      { afterMs: 0, topic: 'a', payload: '1' },
      { afterMs: 100, topic: 'b', payload: '1' },
      { afterMs: 100, topic: 'c', payload: '1' },
      { afterMs: 250, topic: 'd', payload: '1' },
    ])
    const player = new ScriptPlayer(events)
    expect(player.due(0).map(e => e.topic)).toEqual(['a'])
    expect(player.nextDueMs()).toBe(100)
    expect(player.due(99)).toEqual([])
    expect(player.due(100).map(e => e.topic)).toEqual(['b', 'c'])
    expect(player.done()).toBe(false)
    expect(player.due(1000).map(e => e.topic)).toEqual(['d'])
    expect(player.done()).toBe(true)
    expect(player.nextDueMs()).toBeNull()
  })
})

describe('the example scripts', () => {
  const layout = demoLayout()

  it.each(['one-train-up-main.json', 'spad-demo.json'])('%s is valid and names only ids of the demo layout', (name) => {
    const events = parsed(scriptFile(name))
    expect(events.length).toBeGreaterThan(5)
    expect(unknownIds(layout, events)).toEqual([])
  })

  it('unknownIds lists topics naming ids the layout does not have', () => {
    expect(unknownIds(layout, parsed([{ afterMs: 0, topic: 'detector/D99', payload: '1' }, { afterMs: 0, topic: 'turnout/T1', payload: 'normal' }]))).toEqual(['detector/D99'])
  })

  /** Feeds a script to the signalling engine the way the Blockbell bridge would (no debounce). */
  function play(events: Scheduled[]) {
    const engine = createEngine(layout)
    for (const e of events) {
      const [kind, id] = e.topic.split('/')
      const at = 1_000_000 + e.dueMs
      if (kind === 'detector') engine.apply({ type: 'detector', detector: id!, occupied: e.payload === '1', at })
      if (kind === 'turnout') engine.apply({ type: 'turnout', turnout: id!, position: e.payload as 'normal', at })
    }
    return engine
  }

  it('one-train-up-main runs one train round the up main at 30-60 scale km/h, front before rear', () => {
    const events = parsed(scriptFile('one-train-up-main.json'))
    const moves = events.filter(e => e.dueMs > 0 && e.topic.startsWith('detector/'))
    expect(moves.map(e => `${e.topic.slice(9)}=${e.payload}`)).toEqual([
      'D01=1', 'D13=0', 'D02=1', 'D01=0', 'D03=1', 'D02=0', 'D04=1', 'D03=0', 'D13=1', 'D04=0',
    ])
    // scale speed over each block of the up main, from the front entering it to the front entering the next
    const entered = (d: string) => moves.find(e => e.topic === `detector/${d}` && e.payload === '1')!.dueMs
    const blocks = [['UM1', 'D01', 'D02'], ['UM2', 'D02', 'D03'], ['UM3', 'D03', 'D04']] as const
    for (const [block, into, next] of blocks) {
      const lengthMm = layout.blocks.find(b => b.id === block)!.lengthMm
      const { kmh } = scaleSpeed({ lengthMm, seconds: (entered(next) - entered(into)) / 1000, ratio: layout.scale.ratio })
      expect(kmh, block).toBeGreaterThan(30)
      expect(kmh, block).toBeLessThan(60)
    }
    expect(play(events).state().alarms).toEqual([])
  })

  it('spad-demo makes the engine raise one signal passed at danger alarm, at SU3 into UM4', () => {
    const alarms = play(parsed(scriptFile('spad-demo.json'))).state().alarms
    expect(alarms.map(a => [a.signal, a.block])).toEqual([['SU3', 'UM4']])
  })
})
