import { describe, expect, it } from 'vitest'
import { autoPlans, checkPlans, findCycles, HEADCODE, TrainPlan } from '../../../fake-hardware/plan'
import { createRandom } from '../../../fake-hardware/random'
import { Simulation } from '../../../fake-hardware/simulation'
import { circle, demoLayout, demoPlans, plan } from './harness'

describe('headcodes', () => {
  it.each(['1F42', '2J01', '2T33', '1U29', '1A40'])('accepts %s', (h) => {
    // docs/sources.md §5: digit + letter + two digits; examples from the TD feed (Wikipedia "Train reporting number")
    expect(HEADCODE.test(h)).toBe(true)
  })
  it.each(['1f42', 'F142', '12F4', '1F4', '1F423', ''])('refuses %j', (h) => {
    expect(HEADCODE.test(h)).toBe(false)
    expect(TrainPlan.safeParse({ headcode: h, lengthMm: 500, speedKmh: 40, route: ['A', 'B'] }).success).toBe(false)
  })
})

describe('checkPlans', () => {
  it('accepts the demo plans for the demo layout', () => {
    expect(checkPlans(demoLayout(), demoPlans())).toEqual([])
    expect(demoPlans().map(p => p.headcode)).toEqual(['1F42', '6M50', '2J01', '2T33'])
  })

  const layout = demoLayout()
  const route = ['FY1', 'UM1', 'UM2', 'UM3', 'UM4']
  it.each([
    ['an unknown block', { route: ['FY1', 'UM9'] }, 'trains[0].route[1]', 'unknown block "UM9"'],
    ['blocks that are not linked', { route: ['FY1', 'UM2', 'UM3', 'UM4'] }, 'trains[0].route[0]', 'no link from FY1 to UM2'],
    ['a train longer than its first block', { lengthMm: 2000, route }, 'trains[0].lengthMm', 'does not fit in its first block FY1'],
    ['a reversal in a block too short for the train', { lengthMm: 1300, route: ['BR', 'CP'] }, 'trains[0].route[1]', 'must fit in CP (1200 mm) to reverse there'],
  ])('reports %s', (_, change, path, message) => {
    const errors = checkPlans(layout, [plan(Object.assign({ headcode: '1F42', lengthMm: 600, speedKmh: 40, route }, change))])
    expect(errors.map(e => e.path)).toContain(path)
    expect(errors.find(e => e.path === path)!.message).toContain(message)
  })

  it('reports a move from one leg of a turnout to the other', () => {
    // T3 in BR has legs JD and JU; both JD -> BR and BR -> JU are links, but no train runs JD -> BR -> JU
    const errors = checkPlans(layout, [plan({ headcode: '1F42', lengthMm: 600, speedKmh: 40, route: ['DM2', 'JD', 'BR', 'JU', 'UM3'] })])
    expect(errors).toContainEqual({ path: 'trains[0].route[2]', message: 'a train cannot run JD -> BR -> JU' })
  })

  it('reports two trains with one headcode or one starting block', () => {
    const a = plan({ headcode: '1F42', lengthMm: 600, speedKmh: 40, route })
    const errors = checkPlans(layout, [a, { ...a }])
    expect(errors.map(e => e.message)).toEqual([
      'headcode 1F42 is used by two trains',
      '1F42 and 1F42 both start in block FY1',
    ])
  })

  it('accepts a lift between two fiddle roads, and refuses one onto a too-short block', () => {
    const lifted = plan({ headcode: '2T33', lengthMm: 450, speedKmh: 35, route: [{ block: 'FY4', lift: true }, 'DM1', 'DM2', 'JD', 'BR', 'CP', 'BR', 'JU', 'UM3', 'UM4', 'FY2'] })
    expect(checkPlans(layout, [lifted])).toEqual([])
    const ontoShort = plan({ headcode: '2T33', lengthMm: 1000, speedKmh: 35, route: ['FY2', { block: 'JD', lift: true }, 'BR', 'CP', 'BR', 'JU', 'UM3', 'UM4'] })
    expect(checkPlans(layout, [ontoShort])).toContainEqual({ path: 'trains[0].route[1]', message: 'the train does not fit in JD' })
  })
})

describe('round trips for layouts without a plan', () => {
  it('finds the four loops of the demo layout, through each fiddle road', () => {
    const cycles = findCycles(demoLayout()).map(c => c.join(' '))
    expect(cycles.sort()).toEqual([
      'UM1 UM2 UM3 UM4 FY1',
      'UM1 UM2 UM3 UM4 FY2',
      'DM1 DM2 DM3 DM4 FY3',
      'DM1 DM2 DM3 DM4 FY4',
    ].sort())
  })

  it('finds one round trip on a circle of blocks', () => {
    expect(findCycles(circle(5))).toEqual([['B0', 'B1', 'B2', 'B3', 'B4']])
  })

  it('picks valid trains, at most one per three blocks of a round trip', () => {
    const layout = demoLayout()
    const plans = autoPlans(layout, 4, createRandom(1))
    expect(plans).toHaveLength(4)
    expect(checkPlans(layout, plans)).toEqual([])
    for (const p of plans) {
      expect(p.speedKmh).toBeGreaterThanOrEqual(30)
      expect(p.speedKmh).toBeLessThanOrEqual(60)
    }
    expect(autoPlans(circle(5), 4, createRandom(1))).toHaveLength(1)
    // picked trains run on the layout without meeting in a block
    const sim = new Simulation(layout, plans, { seed: 1, ignoreSignals: true })
    sim.start()
    for (let t = 0; t < 600_000; t += 100) {
      sim.step(100, {})
      const blocks = sim.view().flatMap(v => v.blocks)
      expect(new Set(blocks).size).toBe(blocks.length)
    }
    expect(sim.view().every(v => v.laps > 0)).toBe(true)
  })

  it('gives the same trains for the same seed', () => {
    expect(autoPlans(demoLayout(), 3, createRandom(9))).toEqual(autoPlans(demoLayout(), 3, createRandom(9)))
  })
})
