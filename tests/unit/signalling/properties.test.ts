// Property tests on random layouts and random event sequences.
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { applyEvent, computeIndications, createEngine, initialState, turnoutLock } from '#shared/signalling'
import type { Layout, LayoutState } from '#shared/signalling'
import { run } from './build'
import { deepFreeze, lockedMoveExample, scenarioArb } from './random-layouts'

/**
 * The section of a signal as Blockbell defines it, traced independently of the engine: from `protects` along the set
 * route up to and including the block where the next stop signal stands. `known` is false where a turnout on
 * the way is unknown or set against the route.
 */
function referenceSection(layout: Layout, state: LayoutState, s: Layout['signals'][number]): { blocks: string[], known: boolean } {
  const blocks: string[] = []
  let prev = s.from
  let cur = s.protects
  const seen = new Set<string>()
  const legPos = (t: Layout['turnouts'][number]) => (state.turnouts[t.id] === 'normal' ? t.normal : state.turnouts[t.id] === 'reverse' ? t.reverse : null)
  while (!seen.has(`${prev}>${cur}`)) {
    seen.add(`${prev}>${cur}`)
    blocks.push(cur)
    const here = layout.turnouts.filter(t => t.block === cur)
    const trailing = here.find(t => t.normal === prev || t.reverse === prev)
    if (trailing && legPos(trailing) !== prev) return { blocks, known: false }
    let outs = layout.links.filter(l => l.from === cur && l.to !== prev).map(l => l.to)
    if (trailing) outs = outs.filter(b => b !== trailing.normal && b !== trailing.reverse)
    if (outs.length === 0) return { blocks, known: true }
    const facing = here.find(t => t !== trailing && outs.some(b => b === t.normal || b === t.reverse))
    let nb = outs[0]!
    if (facing) {
      const leg = legPos(facing)
      if (leg === null || !outs.includes(leg)) return { blocks, known: false }
      nb = leg
    }
    if (layout.signals.some(x => x.kind !== 'distant' && x.from === cur && x.protects === nb)) return { blocks, known: true }
    prev = cur
    cur = nb
  }
  return { blocks, known: true }
}

const RUNS = { numRuns: 150 }

describe('applyEvent on random layouts and event sequences', () => {
  it('never throws and never changes its input', () => {
    fc.assert(
      fc.property(scenarioArb, ([layout, events]) => {
        deepFreeze(layout)
        const layoutCopy = structuredClone(layout)
        let state = initialState(layout)
        for (const e of events) {
          deepFreeze(state)
          const before = structuredClone(state)
          const r = applyEvent(layout, state, e)
          expect(Array.isArray(r.changes)).toBe(true)
          expect(state).toEqual(before)
          state = r.state
        }
        expect(layout).toEqual(layoutCopy)
      }),
      RUNS,
    )
  })

  it('gives the same state and changes when the same events are replayed', () => {
    fc.assert(
      fc.property(scenarioArb, ([layout, events]) => {
        // the second replay uses a copy of the layout: nothing may depend on object identity
        const a = run(layout, events)
        const b = run(structuredClone(layout), events)
        expect(b).toEqual(a)
        expect(run(layout, events)).toEqual(a)
      }),
      RUNS,
    )
  })

  it('reports exactly the indications that changed, with their previous indication', () => {
    fc.assert(
      fc.property(scenarioArb, ([layout, events]) => {
        let state = initialState(layout)
        let before = computeIndications(layout, state)
        for (const e of events) {
          const r = applyEvent(layout, state, e)
          const after = computeIndications(layout, r.state)
          const changed = layout.signals.map(s => s.id).filter(id => JSON.stringify(before[id]) !== JSON.stringify(after[id]))
          const reported = r.changes.flatMap(c => (c.type === 'indication' ? [c] : []))
          expect(reported.map(c => c.signal)).toEqual(changed)
          for (const c of reported) {
            expect(c.indication).toEqual(after[c.signal])
            expect(c.previous).toEqual(before[c.signal])
          }
          state = r.state
          before = after
        }
      }),
      RUNS,
    )
  })

  it('never shows a stop signal off while a block of its section is occupied (a distant shows caution)', () => {
    fc.assert(
      fc.property(scenarioArb, ([layout, events]) => {
        let state = initialState(layout)
        for (const e of events) {
          state = applyEvent(layout, state, e).state
          const shown = computeIndications(layout, state)
          for (const s of layout.signals) {
            const { blocks, known } = referenceSection(layout, state, s)
            const occupied = blocks.some(b => state.occupied[b])
            const ind = shown[s.id]!
            if (occupied || !known || state.overrides[s.id] === 'hold') {
              expect(ind.aspect, `${s.id} ${s.kind}`).toBe(s.kind === 'distant' ? 'caution' : 'danger')
            }
            if (ind.aspect === 'danger') expect(ind.indicator).toBeNull()
            if (s.kind === 'two-aspect') expect(['danger', 'proceed']).toContain(ind.aspect)
            if (s.kind === 'distant') expect(['caution', 'proceed']).toContain(ind.aspect)
            if (s.kind === 'three-aspect') expect(ind.aspect).not.toBe('preliminary-caution')
          }
        }
      }),
      RUNS,
    )
  })

  it('raises an alarm only for a signal that showed danger just before, and keeps every alarm', () => {
    fc.assert(
      fc.property(scenarioArb, ([layout, events]) => {
        let state = initialState(layout)
        for (const e of events) {
          const r = applyEvent(layout, state, e)
          const shownBefore = computeIndications(layout, state)
          for (const c of r.changes) {
            if (c.type === 'alarm' && c.alarm.kind === 'spad') {
              expect(shownBefore[c.alarm.signal]!.aspect).toBe('danger')
              const sig = layout.signals.find(s => s.id === c.alarm.signal)!
              expect(sig.protects).toBe(c.alarm.block)
              expect(state.occupied[sig.from]).toBe(true)
            }
          }
          expect(r.state.alarms.length).toBeGreaterThanOrEqual(state.alarms.length)
          expect(r.state.alarms.slice(0, state.alarms.length).map(a => a.id)).toEqual(state.alarms.map(a => a.id))
          state = r.state
        }
      }),
      RUNS,
    )
  })

  it('raises a turnout-under-lock alarm exactly when a reported move finds the turnout locked, and applies the move anyway', () => {
    // The rule (49 CFR 236.207 / 236.314 [P], REFERENCES.md §10): no throw while the turnout's block is occupied
    // (track locking) or while a stop signal whose route runs over it shows anything but stop (route locking).
    // Checked here against the independent section tracer of this file, not the engine's own.
    let seen = 0
    fc.assert(
      fc.property(scenarioArb, ([layout, events]) => {
        let state = initialState(layout)
        for (const e of events) {
          const r = applyEvent(layout, state, e)
          const t = e.type === 'turnout' ? layout.turnouts.find(x => x.id === e.turnout) : undefined
          const alarms = r.changes.flatMap(c => (c.type === 'alarm' && c.alarm.kind === 'turnout-under-lock' ? [c.alarm] : []))
          if (t && e.type === 'turnout' && state.turnouts[t.id] !== e.position) {
            const shown = computeIndications(layout, state)
            const signal = state.occupied[t.block]
              ? null
              : layout.signals.find(s => s.kind !== 'distant' && shown[s.id]!.aspect !== 'danger' && referenceSection(layout, state, s).blocks.includes(t.block))?.id ?? null
            // a first report (from unknown) is not a move and raises nothing
            const locked = state.turnouts[t.id] !== 'unknown' && (state.occupied[t.block] === true || signal !== null)
            const lock = turnoutLock(layout, state, t.id)
            const lockedNow = state.occupied[t.block] === true || signal !== null
            expect(lock === null ? null : lock.reason === 'occupied' ? 'occupied' : lock.signal).toBe(lockedNow ? (signal ?? 'occupied') : null)
            expect(r.state.turnouts[t.id]).toBe(e.position)
            if (locked) {
              seen++
              expect(alarms).toHaveLength(1)
              expect(alarms[0]).toMatchObject({ turnout: t.id, block: t.block, signal, description: state.descriptions[t.block] ?? null, acknowledgedAt: null })
            } else {
              expect(alarms).toEqual([])
            }
          } else {
            expect(alarms).toEqual([])
          }
          state = r.state
        }
      }),
      { ...RUNS, examples: [[lockedMoveExample()]] },
    )
    expect(seen).toBeGreaterThan(0)
  })
})

describe('createEngine', () => {
  it('agrees with applyEvent on every event sequence, turnout-under-lock alarms included', () => {
    let lockAlarms = 0
    fc.assert(
      fc.property(scenarioArb, ([layout, events]) => {
        const engine = createEngine(layout)
        let state = initialState(layout)
        expect(engine.state()).toEqual(state)
        for (const e of events) {
          const r = applyEvent(layout, state, e)
          state = r.state
          expect(engine.apply(e)).toEqual(r.changes)
          expect(engine.state()).toEqual(state)
          expect(engine.indications()).toEqual(computeIndications(layout, state))
          for (const t of layout.turnouts) expect(turnoutLock(layout, engine.state(), t.id)).toEqual(turnoutLock(layout, state, t.id))
          lockAlarms += r.changes.filter(c => c.type === 'alarm' && c.alarm.kind === 'turnout-under-lock').length
        }
      }),
      { ...RUNS, examples: [[lockedMoveExample()]] },
    )
    expect(lockAlarms).toBeGreaterThan(0)
  })

  it('continues from a given state without changing it', () => {
    fc.assert(
      fc.property(scenarioArb, ([layout, events]) => {
        const half = Math.floor(events.length / 2)
        let state = initialState(layout)
        for (const e of events.slice(0, half)) state = applyEvent(layout, state, e).state
        const given = deepFreeze(structuredClone(state))
        const engine = createEngine(layout, given)
        for (const e of events.slice(half)) {
          const r = applyEvent(layout, state, e)
          state = r.state
          expect(engine.apply(e)).toEqual(r.changes)
        }
        expect(engine.state()).toEqual(state)
      }),
      RUNS,
    )
  })
})
