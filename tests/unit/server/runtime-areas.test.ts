import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import demo from '#shared/layouts/demo-layout.json' with { type: 'json' }
import { validateLayout } from '#shared/signalling'
import { COMMAND_MAX_AGE_MS, type LiveUser, type ServerMessage } from '#shared/live/protocol'
import { LayoutRuntime } from '../../../server/live/runtime'

// Areas that free themselves, hand-overs the receiver accepts, idempotent area commands and late commands,
// on the real runtime with a fake clock (grace 60 s, hand-over 30 s: the defaults).
const checked = validateLayout(demo)
if (!checked.ok) throw new Error('demo layout does not validate')

const tam: LiveUser = { id: 2, name: 'Tam Oakridge', role: 'signaller' }
const rue: LiveUser = { id: 3, name: 'Rue Hallow', role: 'signaller' }

function runtime() {
  const sent: ServerMessage[] = []
  const journal: { type: string, subject: string | null, payload: Record<string, unknown> }[] = []
  const rt = new LayoutRuntime({
    layoutId: 1, slug: 'wrenfold', layout: checked.ok ? checked.layout : (null as never), debounceMs: 0,
    publish: () => {}, journal: { append: e => journal.push(e) }, broadcast: m => sent.push(m), now: () => Date.now(),
  })
  const snapshot = () => rt.snapshot() as Extract<ServerMessage, { type: 'snapshot' }>
  const feed = () => snapshot().feed.map(e => e.text)
  return { rt, sent, journal, snapshot, feed }
}

beforeEach(() => { vi.useFakeTimers({ now: 1_800_000_000_000 }) })
afterEach(() => { vi.useRealTimers() })

describe('areas whose holder has gone', () => {
  it('an area becomes unattended after the grace period with no panel of its holder, and another signaller may take it', () => {
    const { rt, snapshot, feed } = runtime()
    rt.connect(tam)
    rt.connect(rue)
    expect(rt.command(tam, { action: 'take-area', area: 'main' })).toEqual({ ok: true })
    expect(rt.command(rue, { action: 'take-area', area: 'main' })).toMatchObject({ ok: false, reason: expect.stringContaining('held by Tam Oakridge') })
    rt.disconnect(tam)
    vi.advanceTimersByTime(59_000)
    expect(snapshot().unattended).toEqual({})
    expect(rt.command(rue, { action: 'take-area', area: 'main' })).toMatchObject({ ok: false })
    vi.advanceTimersByTime(1_000)
    expect(Object.keys(snapshot().unattended ?? {})).toEqual(['main'])
    expect(feed().at(-1)).toContain('Main line is unattended')
    expect(rt.command(rue, { action: 'take-area', area: 'main' })).toEqual({ ok: true })
    expect(rt.areaHolders().main).toEqual(rue)
    expect(snapshot().unattended).toEqual({})
    expect(feed().at(-1)).toBe('Rue Hallow took Main line, unattended since Tam Oakridge left')
  })

  it('a holder who comes back within the grace period keeps the area attended', () => {
    const { rt, snapshot } = runtime()
    rt.connect(tam)
    rt.command(tam, { action: 'take-area', area: 'branch' })
    rt.disconnect(tam)
    vi.advanceTimersByTime(30_000)
    rt.connect(tam)
    vi.advanceTimersByTime(60_000)
    expect(snapshot().unattended).toEqual({})
  })

  it('holders restored at start with nobody connected become unattended after the grace period', () => {
    const sent: ServerMessage[] = []
    const rt = new LayoutRuntime({
      layoutId: 1, slug: 'wrenfold', layout: checked.ok ? checked.layout : (null as never), debounceMs: 0, areas: { main: tam, branch: null },
      publish: () => {}, journal: { append: () => {} }, broadcast: m => sent.push(m), now: () => Date.now(), areaGraceMs: 5_000,
    })
    vi.advanceTimersByTime(5_000)
    expect(Object.keys((rt.snapshot() as Extract<ServerMessage, { type: 'snapshot' }>).unattended ?? {})).toEqual(['main'])
  })
})

describe('hand-over waits for the receiver', () => {
  it('the area stays with the giver until the receiver accepts', () => {
    const { rt, snapshot, journal } = runtime()
    rt.connect(tam)
    rt.connect(rue)
    rt.command(tam, { action: 'take-area', area: 'main' })
    expect(rt.command(tam, { action: 'hand-over', area: 'main', to: rue.id })).toEqual({ ok: true })
    expect(rt.areaHolders().main).toEqual(tam)
    expect(snapshot().offers?.main).toMatchObject({ from: tam, to: rue, until: Date.now() + 30_000 })
    expect(journal.at(-1)).toMatchObject({ type: 'command', payload: { action: 'hand-over', offer: true } })
    expect(rt.command(tam, { action: 'accept-hand-over', area: 'main' })).toMatchObject({ ok: false, reason: 'Main line is offered to Rue Hallow, not to you.' })
    expect(rt.command(rue, { action: 'accept-hand-over', area: 'main' })).toEqual({ ok: true })
    expect(rt.areaHolders().main).toEqual(rue)
    expect(snapshot().offers).toEqual({})
  })

  it('falls back to the giver when not accepted in time, and says so', () => {
    const { rt, snapshot, feed } = runtime()
    rt.connect(tam)
    rt.connect(rue)
    rt.command(tam, { action: 'take-area', area: 'main' })
    rt.command(tam, { action: 'hand-over', area: 'main', to: rue.id })
    vi.advanceTimersByTime(30_000)
    expect(snapshot().offers).toEqual({})
    expect(rt.areaHolders().main).toEqual(tam)
    expect(feed().at(-1)).toBe('Rue Hallow did not accept Main line within 30 s: it stays with Tam Oakridge.')
    expect(rt.command(rue, { action: 'accept-hand-over', area: 'main' })).toMatchObject({ ok: false, reason: expect.stringContaining('Nobody is offering you Main line') })
  })

  it('a declined hand-over stays with the giver', () => {
    const { rt, feed } = runtime()
    rt.connect(tam)
    rt.connect(rue)
    rt.command(tam, { action: 'take-area', area: 'main' })
    rt.command(tam, { action: 'hand-over', area: 'main', to: rue.id })
    expect(rt.command(rue, { action: 'decline-hand-over', area: 'main' })).toEqual({ ok: true })
    expect(rt.areaHolders().main).toEqual(tam)
    expect(feed().at(-1)).toBe('Rue Hallow declined Main line: it stays with Tam Oakridge.')
  })
})

describe('area commands are idempotent', () => {
  it('Take when you hold it does nothing and says so; Release of a free area does nothing; the same offer twice is one', () => {
    const { rt, journal } = runtime()
    rt.connect(tam)
    rt.connect(rue)
    rt.command(tam, { action: 'take-area', area: 'main' })
    const entries = journal.length
    expect(rt.command(tam, { action: 'take-area', area: 'main' })).toEqual({ ok: true, note: 'you already hold Main line.' })
    expect(rt.command(tam, { action: 'release-area', area: 'branch' })).toEqual({ ok: true, note: 'Branch & station is not held: nothing to release.' })
    rt.command(tam, { action: 'hand-over', area: 'main', to: rue.id })
    const offered = journal.length
    expect(rt.command(tam, { action: 'hand-over', area: 'main', to: rue.id })).toMatchObject({ ok: true, note: expect.stringContaining('already offered to Rue Hallow') })
    expect(journal.length).toBe(offered)
    expect(offered).toBe(entries + 1)
    expect(rt.areaHolders().main).toEqual(tam)
  })
})

describe('late commands', () => {
  it(`refuses a command that reaches the server more than ${COMMAND_MAX_AGE_MS / 1000} s after it was made, and does nothing`, () => {
    const { rt } = runtime()
    rt.connect(tam)
    rt.command(tam, { action: 'take-area', area: 'main' })
    const made = Date.now()
    vi.advanceTimersByTime(28_000)
    const outcome = rt.command(tam, { action: 'set-override', signal: 'SF1', mode: 'hold', revision: 0 }, made)
    expect(outcome).toMatchObject({ ok: false, reason: expect.stringContaining('reached the server 28 s after you made it') })
    expect(rt.state().overrides.SF1).toBe('auto')
    expect(rt.command(tam, { action: 'set-override', signal: 'SF1', mode: 'hold', revision: 0 }, Date.now() - 1000)).toEqual({ ok: true })
    expect(rt.state().overrides.SF1).toBe('hold')
  })
})

describe('decoder addresses from the detectors', () => {
  it('describe the train in the block from the layout table; an address not in the table is rejected and journaled', () => {
    const { rt, journal, feed } = runtime()
    rt.detectorInput('D13', true, Date.now(), 142) // FY1; address 142 is 1F42 in the demo layout's decoders table
    expect(rt.state().descriptions.FY1).toBe('1F42')
    expect(feed().at(-1)).toBe('1F42 in Fiddle road 1 by decoder address 142')
    rt.detectorInput('D14', true, Date.now(), 9999)
    expect(rt.state().descriptions.FY2).toBeUndefined()
    expect(journal.at(-1)).toMatchObject({ type: 'input-rejected', subject: 'detector/D14', payload: { reason: 'decoder address 9999 is not in the layout\'s decoder table' } })
  })

  it('leave a berth alone that already holds that description', () => {
    const { rt, journal } = runtime()
    rt.detectorInput('D13', true, Date.now(), 142)
    const entries = journal.length
    rt.detectorInput('D13', true, Date.now(), 142)
    expect(journal.length).toBe(entries)
  })
})
