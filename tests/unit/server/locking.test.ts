// The live runtime and turnout locking: refusals a signaller can act on, an admin's forced throw, the alarm
// for a reported move under a lock, and throw requests that do not move anything until the turnout reports.
// Locking rule: 49 CFR 236.207 / 236.314 [P] and detector locking (Subpart G) [M], REFERENCES.md §10.
import { describe, expect, it } from 'vitest'
import type { LiveChange } from '#shared/live/protocol'
import { ADA, DemoRun, RHEA, TAM } from '../../support/live-fixtures'

function demo() {
  const run = new DemoRun()
  run.areas = { main: TAM, branch: RHEA }
  const journal: { type: string, subject: string | null, payload: Record<string, unknown>, userId: number | null }[] = []
  // the fixture's journal is a no-op: wrap the runtime's sink to read what it writes
  ;(run.runtime as unknown as { deps: { journal: { append: (e: never) => void } } }).deps.journal = { append: (e: never) => journal.push(e) }
  return { run, rt: run.runtime, journal }
}
const changesOf = (m: { changes: LiveChange[] }, type: LiveChange['type']) => m.changes.filter(c => c.type === type)
const feedTexts = (m: { changes: LiveChange[] }) => m.changes.flatMap(c => (c.type === 'feed' ? [c.entry.text] : []))
const rev = (run: DemoRun, t: string) => run.state.turnoutRevisions[t]!

describe('throw requests', () => {
  it('a commanded throw changes nothing until the turnout reports: no state change, no signal cleared, no retained indication', () => {
    const { run, rt } = demo()
    run.areas = { main: RHEA, branch: TAM } // T2 lies in UM3, on the Main line area
    // T2 (in UM3) lies normal: SB3 (branch up, JU -> UM3) shows danger, its route not set
    run.hold('SU2') // release T2 from SU2's route lock (SU2 reads over UM3)
    const before = structuredClone(run.state)
    const indicationsBefore = structuredClone((run.snapshot().state.indications))
    const published = run.published.length
    expect(rt.command(RHEA, { action: 'set-turnout', turnout: 'T2', position: 'reverse', revision: rev(run, 'T2') })).toEqual({ ok: true })
    rt.flushDelta()
    expect(run.state.turnouts).toEqual(before.turnouts)
    expect(run.state.turnoutRevisions).toEqual(before.turnoutRevisions)
    expect(run.snapshot().state.indications).toEqual(indicationsBefore)
    expect(run.snapshot().state.indications.SB3!.aspect).toBe('danger')
    const sent = run.published.slice(published)
    expect(sent).toEqual([{ topic: 'blockbell/v1/wrenfold/turnout/T2/set', payload: JSON.stringify({ position: 'reverse', by: RHEA.name }), retain: false }])
    // the report moves it, credited to the person who asked
    const reported = run.event({ type: 'turnout', turnout: 'T2', position: 'reverse' })
    expect(changesOf(reported, 'turnout')).toMatchObject([{ turnout: 'T2', position: 'reverse', by: String(RHEA.id) }])
    expect(feedTexts(reported)).toContain(`Turnout T2 reverse by ${RHEA.name}`)
    expect(run.snapshot().state.indications.SB3!.aspect).not.toBe('danger')
  })

  it('the feed says a throw was asked for, and asking for the position it already has is refused as nothing to do', () => {
    const { run, rt } = demo()
    run.hold('SU3') // T4 (in UM4) is in SU3's section
    expect(rt.command(TAM, { action: 'set-turnout', turnout: 'T4', position: 'normal', revision: rev(run, 'T4') })).toEqual({ ok: false, reason: 'T4 already lies normal.' })
    expect(rt.command(TAM, { action: 'set-turnout', turnout: 'T4', position: 'reverse', revision: rev(run, 'T4') })).toEqual({ ok: true })
    rt.flushDelta()
    expect(feedTexts(run.deltas.at(-1)!)).toEqual([`${TAM.name} asked for T4 to be thrown reverse`])
  })
})

describe('lock refusals', () => {
  it('refuses a throw under a standing train: "T3 is locked: BR is occupied", in the journal and the feed', () => {
    const { run, rt, journal } = demo()
    run.hold('SD1')
    run.occupy('BR')
    const published = run.published.length
    const outcome = rt.command(RHEA, { action: 'set-turnout', turnout: 'T3', position: 'reverse', revision: rev(run, 'T3') })
    expect(outcome).toEqual({ ok: false, reason: 'T3 is locked: BR is occupied' })
    expect(run.published.slice(published)).toEqual([])
    rt.flushDelta()
    expect(feedTexts(run.deltas.at(-1)!)).toEqual([`${RHEA.name}: throw of T3 to reverse refused. T3 is locked: BR is occupied`])
    expect(journal.at(-1)).toMatchObject({ type: 'command-refused', subject: 'T3', userId: RHEA.id, payload: { action: 'set-turnout', reason: 'T3 is locked: BR is occupied' } })
  })

  it('refuses a throw under a signal reading over it, naming the aspect and what to do first', () => {
    const { run, rt } = demo()
    run.areas = { main: RHEA, branch: TAM } // T2 lies in UM3, on the Main line area
    // SU2 (Quillbury up starter, UM2 -> UM3) reads over T2 in UM3; with 1F42-like traffic in UM4 it shows caution
    run.occupy('UM4')
    expect(run.snapshot().state.indications.SU2!.aspect).toBe('caution')
    expect(rt.command(RHEA, { action: 'set-turnout', turnout: 'T2', position: 'reverse', revision: rev(run, 'T2') }))
      .toEqual({ ok: false, reason: 'T2 is locked: SU2 reads over it at caution — hold SU2 first' })
    run.hold('SU2')
    expect(rt.command(RHEA, { action: 'set-turnout', turnout: 'T2', position: 'reverse', revision: rev(run, 'T2') })).toEqual({ ok: true })
  })

  it('sends the panels the lock as it comes on and off, and the snapshot carries it', () => {
    const { run } = demo()
    expect(run.snapshot().state.locks.T2).toEqual({ reason: 'route', signal: 'SU2' })
    const on = run.occupy('UM3')
    expect(changesOf(on, 'lock')).toContainEqual({ type: 'lock', turnout: 'T2', lock: { reason: 'occupied', block: 'UM3' } })
    expect(run.snapshot().state.locks.T2).toEqual({ reason: 'occupied', block: 'UM3' })
    run.hold('SU2')
    const off = run.occupy('UM3', false)
    expect(changesOf(off, 'lock')).toContainEqual({ type: 'lock', turnout: 'T2', lock: null })
    expect(run.snapshot().state.locks.T2).toBeUndefined()
  })
})

describe('forced throws', () => {
  it('lets only an admin force a locked turnout, journaled as forced with the lock it overrode', () => {
    const { run, rt, journal } = demo()
    run.occupy('BR')
    const cmd = { action: 'force-turnout' as const, turnout: 'T3', position: 'reverse' as const, revision: rev(run, 'T3') }
    expect(rt.command(RHEA, cmd)).toEqual({ ok: false, reason: 'Only an admin can force a throw of a locked turnout.' })
    rt.connect(ADA)
    const published = run.published.length
    expect(rt.command(ADA, cmd)).toEqual({ ok: true })
    expect(run.published.slice(published).map(p => p.topic)).toEqual(['blockbell/v1/wrenfold/turnout/T3/set'])
    expect(journal.at(-1)).toMatchObject({ type: 'command', subject: 'T3', userId: ADA.id, payload: { action: 'force-turnout', forced: true, lock: { reason: 'occupied', block: 'BR' } } })
    rt.flushDelta()
    expect(feedTexts(run.deltas.at(-1)!)).toEqual([`${ADA.name} forced T3 to reverse although BR is occupied`])
    // the state still waits for the report
    expect(run.state.turnouts.T3).toBe('normal')
  })

  it('refuses to force a turnout that is not locked', () => {
    const { run, rt } = demo()
    run.hold('SB2')
    run.hold('SD1')
    expect(rt.command(ADA, { action: 'force-turnout', turnout: 'T3', position: 'reverse', revision: rev(run, 'T3') }))
      .toEqual({ ok: false, reason: 'T3 is not locked: throw it the usual way.' })
  })
})

describe('a reported move under a lock', () => {
  it('is applied and raises a turnout-under-lock alarm in the delta every panel gets, with a feed line', () => {
    const { run } = demo()
    run.occupy('BR')
    run.interpose('BR', '2T33')
    const d = run.event({ type: 'turnout', turnout: 'T3', position: 'reverse' })
    expect(run.state.turnouts.T3).toBe('reverse')
    expect(changesOf(d, 'alarm')).toMatchObject([{ alarm: { kind: 'turnout-under-lock', turnout: 'T3', block: 'BR', signal: null, description: '2T33' } }])
    expect(feedTexts(d)).toContain('Turnout T3 moved while locked: Carrowmere branch was occupied by 2T33')
    expect(run.snapshot().state.alarms.filter(a => a.acknowledgedAt === null)).toHaveLength(1)
  })

  it('names the signal reading over it', () => {
    const { run } = demo()
    const d = run.event({ type: 'turnout', turnout: 'T2', position: 'reverse' })
    expect(changesOf(d, 'alarm')).toMatchObject([{ alarm: { kind: 'turnout-under-lock', turnout: 'T2', block: 'UM3', signal: 'SU2' } }])
  })
})

describe('areas on MQTT', () => {
  it('publishes whether each area is held, retained, when that changes', () => {
    const { run, rt } = demo()
    const held = run.published.filter(p => p.topic.includes('/area/'))
    expect(held).toEqual([
      { topic: 'blockbell/v1/wrenfold/area/main', payload: '{"held":true}', retain: true },
      { topic: 'blockbell/v1/wrenfold/area/branch', payload: '{"held":true}', retain: true },
    ])
    rt.command(TAM, { action: 'release-area', area: 'main' })
    expect(run.published.at(-1)).toEqual({ topic: 'blockbell/v1/wrenfold/area/main', payload: '{"held":false}', retain: true })
  })
})
