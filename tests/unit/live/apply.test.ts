// Applying the server's snapshot and deltas on the panel. The expected state is always the real signalling
// engine's own state after the same events (shared/signalling, built to README "Rules of operation").
import { describe, expect, it } from 'vitest'
import { FEED_LIMIT, applyDelta, applySnapshot, emptyView } from '#shared/live/apply'
import { DemoRun, SLUG, TAM, spadRun } from '../../support/live-fixtures'

describe('applySnapshot', () => {
  it('shows the engine state the snapshot carries', () => {
    const run = new DemoRun()
    run.occupy('UM2')
    run.interpose('UM2', '2T33')
    const view = emptyView()
    applySnapshot(view, run.snapshot())
    expect(view.layout).toBe(SLUG)
    expect(view.seq).toBe(run.seq)
    expect(view.state).toEqual(run.liveState())
    expect(view.state.descriptions).toEqual({ UM2: '2T33' })
    expect(view.definition?.name).toBe('Wrenfold Junction')
  })

  it('is idempotent: the same snapshot twice gives the same view as once', () => {
    const run = new DemoRun()
    run.occupy('DM3')
    const msg = run.snapshot()
    const once = emptyView()
    applySnapshot(once, msg)
    const twice = emptyView()
    applySnapshot(twice, msg)
    applySnapshot(twice, msg)
    expect(twice).toEqual(once)
  })

  it('shares nothing with the message, so later deltas leave the message as it was', () => {
    const run = new DemoRun()
    const msg = run.snapshot()
    const before = structuredClone(msg)
    const view = emptyView()
    applySnapshot(view, msg)
    expect(applyDelta(view, run.occupy('UM1'))).toBe('applied')
    expect(view.state.occupied.UM1).toBe(true)
    expect(msg).toEqual(before)
  })

  it('replaces whatever the view had, including a newer seq (a fresh snapshot after a reconnect)', () => {
    const run = new DemoRun()
    const first = run.snapshot()
    const view = emptyView()
    applySnapshot(view, first)
    applyDelta(view, run.occupy('UM1'))
    applyDelta(view, run.interpose('UM1', '1A40'))
    applySnapshot(view, first)
    expect(view.seq).toBe(first.seq)
    expect(view.state.occupied.UM1).toBe(false)
    expect(view.state.descriptions).toEqual({})
  })

  it('keeps only the newest feed entries, newest last', () => {
    const run = new DemoRun()
    const view = emptyView()
    applySnapshot(view, run.snapshot())
    for (let i = 0; i < FEED_LIMIT; i++) {
      applyDelta(view, run.event({ type: 'override', signal: 'SU3', mode: i % 2 ? 'auto' : 'hold' }))
    }
    expect(view.feed).toHaveLength(FEED_LIMIT)
    expect(view.feed.at(-1)).toEqual(run.snapshot().feed.at(-1))
    expect(view.feed.map(e => e.at)).toEqual([...view.feed.map(e => e.at)].sort((a, b) => a - b))
  })

  it('shows the feed in the same order after a load or a reconnect as on a panel connected all along', () => {
    const run = new DemoRun()
    const allAlong = emptyView()
    applySnapshot(allAlong, run.snapshot())
    const { deltas } = spadRun(run)
    for (const d of deltas) applyDelta(allAlong, d)
    const loadedNow = emptyView()
    applySnapshot(loadedNow, run.snapshot())
    expect(loadedNow.feed.length).toBeGreaterThan(3)
    expect(loadedNow.feed).toEqual(allAlong.feed.slice(-loadedNow.feed.length))
    // and the deltas that follow go on at the same end on both
    const next = run.occupy('UM3', false)
    applyDelta(allAlong, next)
    applyDelta(loadedNow, next)
    expect(loadedNow.feed.at(-1)).toEqual(allAlong.feed.at(-1))
    expect(loadedNow.feed).toEqual(allAlong.feed.slice(-loadedNow.feed.length))
  })
})

describe('applyDelta', () => {
  it('applied in seq order, reproduces the engine state step by step (train run with a signal passed at danger)', () => {
    const run = new DemoRun()
    const view = emptyView()
    applySnapshot(view, run.snapshot())
    const { run: scripted, deltas } = spadRun()
    for (const d of deltas) {
      expect(applyDelta(view, d)).toBe('applied')
      expect(view.seq).toBe(d.seq)
    }
    expect(view.state.occupied).toEqual(scripted.state.occupied)
    expect(view.state.indications).toEqual(scripted.liveState().indications)
    expect(view.state.descriptions).toEqual({ UM2: '1F42', UM3: '1F42' })
    expect(view.state.overrides.SU2).toBe('hold')
    expect(view.state.signalRevisions.SU2).toBe(1)
    expect(view.state.alarms).toEqual(scripted.state.alarms)
    expect(view.state).toEqual(scripted.liveState())
  })

  it('detects a gap and applies nothing of the delta after it', () => {
    const run = new DemoRun()
    const view = emptyView()
    applySnapshot(view, run.snapshot())
    applyDelta(view, run.occupy('UM1'))
    run.occupy('UM2') // seq 2 never reaches the panel
    const before = structuredClone(view)
    expect(applyDelta(view, run.occupy('UM1', false))).toBe('gap')
    expect(view).toEqual(before)
  })

  it('ignores a delta it has already applied, and one older than the snapshot', () => {
    const run = new DemoRun()
    const view = emptyView()
    const old = run.occupy('UM1')
    applySnapshot(view, run.snapshot())
    expect(applyDelta(view, old)).toBe('duplicate')
    const next = run.occupy('UM2')
    expect(applyDelta(view, next)).toBe('applied')
    const after = structuredClone(view)
    expect(applyDelta(view, next)).toBe('duplicate')
    expect(view).toEqual(after)
  })

  it('waits for a snapshot, and ignores deltas of another layout', () => {
    const run = new DemoRun()
    const view = emptyView()
    expect(applyDelta(view, run.occupy('UM1'))).toBe('not-ready')
    applySnapshot(view, run.snapshot())
    expect(applyDelta(view, { ...run.occupy('UM2'), layout: 'another-layout' })).toBe('not-ready')
    expect(view.state.occupied.UM2).toBe(false)
  })

  it('catches up after a gap with a resync snapshot, then follows the deltas again', () => {
    const run = new DemoRun()
    const view = emptyView()
    applySnapshot(view, run.snapshot())
    run.occupy('FY1')
    expect(applyDelta(view, run.interpose('FY1', '1U29'))).toBe('gap')
    applySnapshot(view, run.snapshot())
    expect(applyDelta(view, run.occupy('UM1'))).toBe('applied')
    expect(view.state).toEqual(run.liveState())
    expect(view.state.descriptions.UM1).toBe('1U29')
  })

  it('replaces an alarm when it is acknowledged, keeping one entry per alarm', () => {
    const { run, deltas } = spadRun()
    const view = emptyView()
    applySnapshot(view, new DemoRun().snapshot())
    for (const d of deltas) applyDelta(view, d)
    const id = view.state.alarms[0]!.id
    expect(applyDelta(view, run.event({ type: 'acknowledge', alarm: id, by: String(TAM.id) }))).toBe('applied')
    expect(view.state.alarms).toHaveLength(1)
    expect(view.state.alarms[0]).toMatchObject({ id, signal: 'SU2', block: 'UM3', description: '1F42', acknowledgedBy: String(TAM.id) })
    expect(view.state.alarms[0]!.acknowledgedAt).toBeGreaterThan(view.state.alarms[0]!.at)
  })

  it('applies the changes the live runtime adds: areas, operators, controllers, dropouts, feed and session', () => {
    const run = new DemoRun()
    const view = emptyView()
    applySnapshot(view, run.snapshot())
    const session = { id: 7, name: 'Evening running', startedAt: run.at, fastClockRatio: 4, fastClockStart: '06:00' }
    const outcome = applyDelta(view, run.delta([
      { type: 'areas', areas: { main: TAM, branch: null } },
      { type: 'operators', operators: [TAM] },
      { type: 'device', device: 'fake-board-1', status: { online: false, at: run.at } },
      { type: 'dropout', block: 'UM2', detector: 'D02', at: run.at },
      { type: 'feed', entry: { at: run.at, text: 'Tam Oakridge took Main line', tone: 'info' } },
      { type: 'session', session },
    ]))
    expect(outcome).toBe('applied')
    expect(view.areas).toEqual({ main: TAM, branch: null })
    expect(view.operators).toEqual([TAM])
    expect(view.devices['fake-board-1']).toEqual({ online: false, at: run.at })
    expect(view.state.dropouts).toEqual({ UM2: run.at })
    expect(view.feed.at(-1)?.text).toBe('Tam Oakridge took Main line')
    expect(view.session).toEqual(session)
    applyDelta(view, run.delta([{ type: 'session', session: null }]))
    expect(view.session).toBeNull()
  })
})
