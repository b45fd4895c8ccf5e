// The mimic diagram drawn from the demo layout with states made by the real engine: aspects carry a
// shape as well as a colour (README "Rules of operation"; the aspect sequence is the engine's, docs/sources.md §1), occupied
// and free blocks differ in stroke, descriptions stand in their berths.
import { describe, expect, it } from 'vitest'
import { mountSuspended } from '@nuxt/test-utils/runtime'
import PanelDiagram from '~/components/panel/PanelDiagram.vue'
import { ASPECT_CUE, turnoutLegs } from '#shared/live/diagram'
import { DemoRun, spadRun } from '../../support/live-fixtures'

function mountDiagram(run: DemoRun, extra: Record<string, unknown> = {}) {
  return mountSuspended(PanelDiagram, {
    props: {
      definition: run.layout, state: run.liveState(), holders: run.areas,
      alarmSignals: [], alarmBlocks: [], dropoutSince: 0, ...extra,
    },
  })
}

describe('PanelDiagram', () => {
  it('draws every aspect with its own shape: danger bar, caution dot, preliminary caution two dots, proceed arrow', async () => {
    const run = new DemoRun()
    run.occupy('UM3') // four-aspect up line: SU3 beyond, SU2 at danger, SU1 caution (docs/sources.md §1, S1)
    const w = await mountDiagram(run)
    const state = run.liveState()
    const seen = new Set<string>()
    for (const s of run.layout.signals) {
      const g = w.find(`[data-test="signal-${s.id}"]`)
      const aspect = state.indications[s.id]!.aspect
      expect(g.attributes('data-aspect')).toBe(aspect)
      expect(g.attributes('data-cue')).toBe(ASPECT_CUE[aspect])
      expect(g.find('[data-test="cue"]').exists()).toBe(true)
      expect(g.attributes('aria-label')).toMatch(/Danger|Caution|Preliminary caution|Proceed/)
      seen.add(aspect)
    }
    expect(state.indications.SU2!.aspect).toBe('danger')
    expect(state.indications.SU1!.aspect).toBe('caution')
    expect(w.find('[data-test="signal-SU2"] [data-test="cue"]').element.tagName.toLowerCase()).toBe('rect')
    expect(w.find('[data-test="signal-SU1"] [data-test="cue"]').element.tagName.toLowerCase()).toBe('circle')
    expect(new Set(Object.values(ASPECT_CUE)).size).toBe(4)
    expect(seen.has('danger') && seen.has('caution')).toBe(true)
  })

  it('draws the two-dot and arrow shapes for preliminary caution and proceed', async () => {
    const run = new DemoRun()
    run.occupy('DM4') // down line: SD3 danger, SD2 caution, SD1 preliminary caution (four-aspect)
    const w = await mountDiagram(run)
    expect(run.liveState().indications.SD1!.aspect).toBe('preliminary-caution')
    expect(w.find('[data-test="signal-SD1"]').attributes('data-cue')).toBe('two-dots')
    expect(w.findAll('[data-test="signal-SD1"] [data-test="cue"] circle')).toHaveLength(2)
    const proceed = run.layout.signals.find(s => run.liveState().indications[s.id]!.aspect === 'proceed')!
    expect(w.find(`[data-test="signal-${proceed.id}"] [data-test="cue"]`).element.tagName.toLowerCase()).toBe('path')
  })

  it('marks a held signal with a dashed flashing ring and a cleared one showing more than the line with "!"', async () => {
    const run = new DemoRun()
    run.hold('SU1')
    run.event({ type: 'override', signal: 'SU2', mode: 'clear' })
    run.occupy('UM4') // SU3 at danger: in auto SU2 would show caution; cleared, it shows proceed
    const w = await mountDiagram(run)
    expect(w.find('[data-test="signal-SU1"]').attributes('data-override')).toBe('hold')
    expect(w.find('[data-test="signal-SU1"] [data-test="held-ring"]').exists()).toBe(true)
    expect(w.find('[data-test="signal-SU1"] .bb-flash').exists()).toBe(true)
    expect(w.find('[data-test="signal-SU3"] [data-test="held-ring"]').exists()).toBe(false)
    expect(run.liveState().indications.SU2).toMatchObject({ aspect: 'proceed', exceedsLine: true })
    expect(w.find('[data-test="signal-SU2"] [data-test="exceeds-line"]').exists()).toBe(true)
    expect(w.find('[data-test="signal-SU3"] [data-test="exceeds-line"]').exists()).toBe(false)
  })

  it('draws occupied blocks thick and free ones thin, and marks a recent detector dropout', async () => {
    const run = new DemoRun()
    run.occupy('BR')
    run.occupy('BR', false)
    run.occupy('CP')
    const state = run.liveState()
    state.dropouts = { BR: run.at }
    const w = await mountSuspended(PanelDiagram, {
      props: { definition: run.layout, state, holders: run.areas, alarmSignals: [], alarmBlocks: [], dropoutSince: run.at - 1000 },
    })
    expect(w.find('[data-test="block-CP"]').attributes('data-occupied')).toBe('true')
    expect(w.find('[data-test="block-CP"] [data-test="occupied"]').classes()).toContain('bb-occupied')
    expect(w.find('[data-test="block-BR"]').attributes('data-occupied')).toBe('false')
    expect(w.find('[data-test="block-BR"] [data-test="occupied"]').exists()).toBe(false)
    // the track line keeps a bar across each end, so block ends show whether free or occupied
    expect(w.find('[data-test="block-BR"] .bb-track').exists()).toBe(true)
    expect(w.find('[data-test="block-BR"] [data-test="block-ends"]').attributes('d')).toMatch(/^M[^M]+M[^M]+$/)
    expect(w.find('[data-test="block-BR"] [data-test="dropout"]').exists()).toBe(true)
    expect(w.find('[data-test="block-CP"] [data-test="dropout"]').exists()).toBe(false)
  })

  it('shows each train description in the berth of its block as the train steps on', async () => {
    const { run } = spadRun()
    const w = await mountDiagram(run)
    expect(w.find('[data-test="berth-UM3"] [data-test="description"]').text()).toBe('1F42')
    expect(w.find('[data-test="berth-UM2"] [data-test="description"]').text()).toBe('1F42')
    expect(w.find('[data-test="berth-UM1"] [data-test="description"]').exists()).toBe(false)
    expect(w.find('[data-test="berth-FY1"] [data-test="description"]').exists()).toBe(false)
  })

  it('marks an occupied block with no description with "?" in its berth, edged like occupied track', async () => {
    const run = new DemoRun()
    run.occupy('UM1')
    const w = await mountDiagram(run)
    expect(w.find('[data-test="berth-UM1"] [data-test="undescribed"]').text()).toBe('?')
    expect(w.find('[data-test="berth-UM1"] rect').classes()).toContain('is-occupied')
    expect(w.find('[data-test="berth-UM1"]').attributes('aria-label')).toContain('occupied, no train description')
    expect(w.find('[data-test="berth-UM2"] [data-test="undescribed"]').exists()).toBe(false)
  })

  it('shows turnout positions and the lit junction indicator', async () => {
    const run = new DemoRun()
    run.event({ type: 'turnout', turnout: 'T1', position: 'reverse' })
    const w = await mountDiagram(run)
    expect(w.find('[data-test="turnout-T1"]').attributes('data-position')).toBe('reverse')
    // the set leg is drawn from the point, the other leg is cut off short of it; no letter says it
    const legsOf = (id: string) => turnoutLegs(run.layout, id)!
    const end = (el: ReturnType<typeof w.find>) => [Number(el.attributes('x2')), Number(el.attributes('y2'))]
    expect(end(w.find('[data-test="turnout-T1"] [data-test="set-leg"]'))).toEqual(legsOf('T1').reverse[1])
    expect(w.findAll('[data-test="turnout-T1"] [data-test="cut-leg"]').map(end)).toEqual([legsOf('T1').normal[1]])
    expect(end(w.find('[data-test="turnout-T4"] [data-test="set-leg"]'))).toEqual(legsOf('T4').normal[1])
    expect(w.find('[data-test="turnout-T1"] [data-test="turnout-tag"]').text()).toBe('T1')
    // T1 reverse sets SD1's route to the branch (JD), its diverging leg: indicator position 1 lit
    expect(run.liveState().indications.SD1!.indicator).toBe('1')
    expect(w.find('[data-test="signal-SD1"] [data-test="junction-indicator"]').text()).toBe('1')
    expect(w.find('[data-test="signal-SD2"] [data-test="junction-indicator"]').exists()).toBe(false)
  })

  it('highlights the signal and block of an alarm not yet acknowledged', async () => {
    const { run } = spadRun()
    const w = await mountDiagram(run, { alarmSignals: ['SU2'], alarmBlocks: ['UM3'] })
    expect(w.find('[data-test="signal-SU2"] [data-test="signal-alarm"]').exists()).toBe(true)
    expect(w.find('[data-test="block-UM3"] [data-test="block-alarm"]').exists()).toBe(true)
    expect(w.find('[data-test="signal-SU1"] [data-test="signal-alarm"]').exists()).toBe(false)
  })

  it('opens controls from the keyboard: signals, turnouts and berths take focus and answer Enter and Space', async () => {
    const run = new DemoRun()
    const w = await mountDiagram(run)
    const signal = w.find('[data-test="signal-SU1"]')
    expect(signal.attributes('tabindex')).toBe('0')
    await signal.trigger('keydown', { key: 'Enter' })
    await w.find('[data-test="turnout-T2"]').trigger('keydown', { key: ' ' })
    await w.find('[data-test="berth-UM2"]').trigger('keydown', { key: 'Enter' })
    expect(w.emitted('signal')).toEqual([['SU1']])
    expect(w.emitted('turnout')).toEqual([['T2']])
    expect(w.emitted('berth')).toEqual([['UM2']])
  })

  it('counts a double tap on a mark once: the second click of it, and a repeat tap within half a second', async () => {
    const run = new DemoRun()
    const w = await mountDiagram(run)
    const turnout = w.find('[data-test="turnout-T4"]')
    await turnout.trigger('click', { detail: 1 })
    await turnout.trigger('click', { detail: 2 })
    await turnout.trigger('click', { detail: 1 })
    expect(w.emitted('turnout')).toEqual([['T4']])
    // another item straight after is a tap of its own
    await w.find('[data-test="signal-SU1"]').trigger('click', { detail: 1 })
    expect(w.emitted('signal')).toEqual([['SU1']])
    await new Promise(resolve => setTimeout(resolve, 550))
    await turnout.trigger('click', { detail: 1 })
    expect(w.emitted('turnout')).toEqual([['T4'], ['T4']])
  })

  it('flashes only the ring of a held signal: its lamp and shape stay lit and readable', async () => {
    const run = new DemoRun()
    run.hold('SU1')
    const w = await mountDiagram(run)
    const flashing = w.findAll('[data-test="signal-SU1"] .bb-flash')
    expect(flashing.map(f => f.attributes('data-test'))).toEqual(['held-ring'])
    expect(w.find('[data-test="signal-SU1"] [data-test="cue"]').element.closest('.bb-flash')).toBeNull()
    expect(w.find('[data-test="signal-SU1"] .bb-lamp-danger').element.closest('.bb-flash')).toBeNull()
  })

  it('draws one ring, round the item whose control is open, and none when nothing is open', async () => {
    const run = new DemoRun()
    const none = await mountDiagram(run)
    expect(none.findAll('[data-test="focus-ring"]')).toHaveLength(0)
    const w = await mountDiagram(run, { selected: 'turnout:T2' })
    expect(w.findAll('[data-test="focus-ring"]')).toHaveLength(1)
    // every item still takes focus and has a name
    for (const el of w.findAll('[data-item]')) {
      expect(el.attributes('tabindex')).toBe('0')
      expect(el.attributes('aria-label')).toBeTruthy()
    }
  })
})
