// Property test of the live runtime on random layouts and event sequences: an accepted throw request never
// concerns a turnout that turnoutLock says is locked at that moment, and the runtime's running record of
// locks always equals the locks worked out afresh from the state.
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { computeIndications, turnoutLock, turnoutLocks, type Layout } from '#shared/signalling'
import type { LiveUser } from '#shared/live/protocol'
import { turnoutSetOf, layoutPrefix } from '#shared/live/topics'
import { LayoutRuntime } from '../../../server/live/runtime'
import { lockedMoveExample, scenarioArb } from '../signalling/random-layouts'

const TAM: LiveUser = { id: 2, name: 'Tam Oakridge', role: 'signaller' }

/** The random layout with one area holding every signal and turnout, so one signaller works them all. */
const withArea = (layout: Layout): Layout => ({
  ...layout,
  areas: [{ id: 'all', name: 'Everything', signals: layout.signals.map(s => s.id), turnouts: layout.turnouts.map(t => t.id) }],
})

describe('the runtime on random layouts', () => {
  it('accepts no throw of a locked turnout; a device that throws at once then never raises a lock alarm', () => {
    let accepted = 0
    let refused = 0
    fc.assert(
      fc.property(scenarioArb, ([plain, events]) => {
        const layout = withArea(plain)
        const answers: { turnout: string, position: 'normal' | 'reverse' }[] = []
        let at = 1_700_000_000_000
        const rt = new LayoutRuntime({
          layoutId: 1, slug: 'random', layout, debounceMs: 0, now: () => at,
          publish: (topic, payload) => {
            const id = turnoutSetOf(topic.slice(layoutPrefix('random').length))
            if (id) answers.push({ turnout: id, position: JSON.parse(payload).position })
          },
          journal: { append: () => {} },
          broadcast: () => {},
        })
        rt.connect(TAM)
        expect(rt.command(TAM, { action: 'take-area', area: 'all' })).toEqual({ ok: true })
        for (const e of events) {
          at = Math.max(at + 1, Number.isFinite(e.at) ? e.at : at)
          if (e.type === 'detector' && typeof e.occupied === 'boolean') rt.detectorInput(e.detector, e.occupied, at)
          else if (e.type === 'override' && layout.signals.some(s => s.id === e.signal)) {
            rt.command(TAM, { action: 'set-override', signal: e.signal, mode: e.mode, revision: rt.state().signalRevisions[e.signal]! })
          } else if (e.type === 'turnout' && e.position !== 'unknown' && layout.turnouts.some(t => t.id === e.turnout)) {
            const lock = turnoutLock(layout, rt.state(), e.turnout)
            const already = rt.state().turnouts[e.turnout] === e.position
            const outcome = rt.command(TAM, { action: 'set-turnout', turnout: e.turnout, position: e.position, revision: rt.state().turnoutRevisions[e.turnout]! })
            if (outcome.ok) {
              accepted++
              expect(lock, `${e.turnout} accepted while locked`).toBeNull()
              expect(rt.state().turnouts[e.turnout]).not.toBe(e.position) // a request moves nothing by itself
            } else if (lock && !already) {
              refused++
              expect(outcome.reason).toMatch(new RegExp(`^${e.turnout} is locked: `))
            }
            // the device throws it and reports at once
            for (const a of answers.splice(0)) rt.turnoutReport(a.turnout, a.position, at)
          }
          const state = rt.state()
          expect(rt.turnoutLocks()).toEqual(turnoutLocks(layout, state, computeIndications(layout, state)))
          expect(state.alarms.filter(a => a.kind === 'turnout-under-lock')).toEqual([])
        }
        rt.stop()
      }),
      { numRuns: 150, examples: [[lockedMoveExample()]] },
    )
    expect(accepted).toBeGreaterThan(0)
    expect(refused).toBeGreaterThan(0)
  }, 60_000)
})
