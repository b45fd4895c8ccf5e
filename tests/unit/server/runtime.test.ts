import { describe, expect, it } from 'vitest'
import demo from '#shared/layouts/demo-layout.json' with { type: 'json' }
import { validateLayout } from '#shared/signalling'
import type { LiveUser, ServerMessage } from '#shared/live/protocol'
import { LayoutRuntime } from '../../../server/live/runtime'

// The layout runtime on its own: what it broadcasts, publishes and journals for given inputs.
const checked = validateLayout(demo)
if (!checked.ok) throw new Error('demo layout does not validate')

function runtime() {
  const sent: ServerMessage[] = []
  const published: { topic: string, payload: string, retain: boolean }[] = []
  const journal: { type: string, subject: string | null }[] = []
  const rt = new LayoutRuntime({
    layoutId: 1, slug: 'wrenfold', layout: checked.ok ? checked.layout : (null as never), debounceMs: 0,
    publish: (topic, payload, retain) => published.push({ topic, payload, retain }),
    journal: { append: e => journal.push(e) },
    broadcast: m => sent.push(m),
  })
  return { rt, sent, published, journal }
}
const nextTurn = () => new Promise(resolve => setImmediate(resolve))
const tam: LiveUser = { id: 2, name: 'Tam Oakridge', role: 'signaller' }
const milo: LiveUser = { id: 4, name: 'Milo Brackenby', role: 'viewer' }

describe('layout runtime', () => {
  it('sends the changes of one event-loop turn as one numbered delta', async () => {
    const { rt, sent } = runtime()
    rt.detectorInput('D01', true, 1000)
    rt.detectorInput('D02', true, 1001)
    expect(sent).toEqual([])
    await nextTurn()
    expect(sent).toHaveLength(1)
    const delta = sent[0]!
    expect(delta.type === 'delta' && delta.seq).toBe(1)
    expect(delta.type === 'delta' && delta.changes.filter(c => c.type === 'block').map(c => c.type === 'block' && c.block)).toEqual(['UM1', 'UM2'])
    rt.detectorInput('D03', true, 1002)
    await nextTurn()
    expect(sent.map(m => m.type === 'delta' && m.seq)).toEqual([1, 2])
  })

  it('never lets a snapshot run ahead of a delta: queued changes go out first, then the snapshot carries that seq', async () => {
    const { rt, sent } = runtime()
    rt.detectorInput('D02', true, 1000)
    const snapshot = rt.snapshot()
    expect(sent.map(m => m.type)).toEqual(['delta'])
    expect(snapshot.type === 'snapshot' && snapshot.seq).toBe(1)
    expect(snapshot.type === 'snapshot' && snapshot.state.occupied.UM2).toBe(true)
    await nextTurn()
    expect(sent).toHaveLength(1)
  })

  it('publishes each changed indication retained, and journals the input with each change', async () => {
    const { rt, published, journal } = runtime()
    rt.detectorInput('D02', true, 1000)
    expect(published.find(p => p.topic === 'blockbell/v1/wrenfold/signal/SU1')).toMatchObject({ retain: true })
    expect(JSON.parse(published.find(p => p.topic.endsWith('/SU1'))!.payload)).toMatchObject({ aspect: 'danger' })
    expect(journal.map(j => j.type)).toEqual(expect.arrayContaining(['detector-input', 'detector', 'block', 'indication']))
  })

  it('checks commands: role, area held, current revision', () => {
    const { rt } = runtime()
    rt.connect(tam)
    rt.connect(milo)
    expect(rt.command(milo, { action: 'take-area', area: 'main' })).toEqual({ ok: false, reason: 'You are signed in as a viewer: you can watch, not operate.' })
    expect(rt.command(tam, { action: 'set-override', signal: 'SU3', mode: 'hold', revision: 0 })).toMatchObject({ ok: false, reason: 'Nobody holds Main line. Take the area to work this signal.' })
    expect(rt.command(tam, { action: 'take-area', area: 'main' })).toEqual({ ok: true })
    expect(rt.command(tam, { action: 'set-override', signal: 'SU3', mode: 'hold', revision: 0 })).toEqual({ ok: true })
    expect(rt.command(tam, { action: 'set-override', signal: 'SU3', mode: 'auto', revision: 0 })).toMatchObject({ ok: false, reason: expect.stringMatching(/changed meanwhile/) })
    expect(rt.command(tam, { action: 'set-override', signal: 'SU1', mode: 'hold', revision: 0 })).toMatchObject({ ok: false, reason: 'Nobody holds Branch & station. Take the area to work this signal.' })
  })
})
