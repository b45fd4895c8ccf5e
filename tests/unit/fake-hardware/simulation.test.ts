import { describe, expect, it } from 'vitest'
import { createEngine, SCALES } from '#shared/signalling'
import { needsThrough, topologyOf } from '#shared/signalling/topology'
import { modelMmPerSecond, OPERATOR_HOLD_MS, Simulation } from '../../../fake-hardware/simulation'
import type { Publish } from '../../../fake-hardware/output'
import { circle, demoLayout, demoPlans, detectorTrail, feed, occupiedIn, plan, runWithEngine, valid } from './harness'

const proceedAll = (n: number) => Object.fromEntries(Array.from({ length: n }, (_, i) => [`S${i}`, 'proceed' as const]))

/** Steps the simulation until `until` holds or `maxMs` has passed; returns every publish on the way. */
function runUntil(sim: Simulation, aspects: Parameters<Simulation['step']>[1], until: () => boolean, maxMs: number, stepMs = 10): Publish[] {
  const out: Publish[] = []
  for (let t = 0; t < maxMs && !until(); t += stepMs) out.push(...sim.step(stepMs, aspects).publishes)
  return out
}

describe('scale speed of the trains', () => {
  it('runs 1 m of OO track in 5 s at 54.86 scale km/h', () => {
    // docs/sources.md §3 case 6 [C]: OO 1:76.2, 1 m block in 5 s -> 0.2 m/s x 76.2 = 15.24 m/s = 54.86 km/h
    const oo = SCALES.find(s => s.name === 'OO')!
    expect(modelMmPerSecond(54.864, oo.ratio)).toBeCloseTo(200, 6)
    // HO: 1 ft/s is about 60 scale mph (docs/sources.md §3 case 2, forum.trains.com rule of thumb): 95.57 km/h
    expect(modelMmPerSecond(95.57, SCALES.find(s => s.name === 'HO')!.ratio)).toBeCloseTo(304.8, 0)
    const sim = new Simulation(circle(6, 1000, false), [plan({ headcode: '1F42', lengthMm: 300, speedKmh: 54.864, route: ['B0', 'B1', 'B2', 'B3', 'B4', 'B5'] })], { seed: 1, dropoutChance: 0, speedVariation: 0 })
    sim.start()
    const ps = runUntil(sim, {}, () => false, 30_000)
    const entered = (d: string) => ps.find(p => p.topic === `detector/${d}` && occupiedIn(p.payload))!.at
    expect(entered('D2') - entered('D1')).toBeCloseTo(5000, -1)
    expect(entered('D4') - entered('D3')).toBeCloseTo(5000, -1)
  })

  it('runs 3 ft in 10.4 s at the SDMRC worked example speed', () => {
    // docs/sources.md §3 case 1b [C]: 0.9144 m in 10.4 s at 1:76.2 = 24.12 km/h
    const sim = new Simulation(circle(6, 914.4, false), [plan({ headcode: '2J01', lengthMm: 300, speedKmh: 24.1196, route: ['B0', 'B1', 'B2', 'B3', 'B4', 'B5'] })], { seed: 1, dropoutChance: 0, speedVariation: 0 })
    sim.start()
    const ps = runUntil(sim, {}, () => false, 40_000)
    const entered = (d: string) => ps.find(p => p.topic === `detector/${d}` && occupiedIn(p.payload))!.at
    expect(entered('D3') - entered('D2')).toBeCloseTo(10_400, -1)
  })
})

describe('detectors', () => {
  it('reports the front entering each block before the rear leaves the one behind', () => {
    const sim = new Simulation(circle(4, 1000, false), [plan({ headcode: '1F42', lengthMm: 300, speedKmh: 54.864, route: ['B0', 'B1', 'B2', 'B3'] })], { seed: 2, dropoutChance: 0, speedVariation: 0 })
    const start = sim.start().publishes
    expect(detectorTrail(start)).toEqual(['D0=1', 'D1=0', 'D2=0', 'D3=0'])
    const ps = runUntil(sim, {}, () => false, 22_000)
    expect(detectorTrail(ps)).toEqual(['D1=1', 'D0=0', 'D2=1', 'D1=0', 'D3=1', 'D2=0', 'D0=1', 'D3=0', 'D1=1', 'D0=0'])
    // the rear leaves a block once the front is a train length (300 mm at 200 mm/s = 1.5 s) into the next
    const at = (d: string) => ps.find(p => p.topic === `detector/${d}`)!.at
    expect(ps.find(p => p.topic === 'detector/D1' && p.payload === '0')!.at - at('D2')).toBeCloseTo(1500, -1)
  })

  it('a train longer than a block occupies several blocks at once', () => {
    // B0 holds the whole train at the start; the other blocks are shorter than the train
    const layout = circle(6, 1000, false)
    const longStart = { ...layout, blocks: layout.blocks.map(b => (b.id === 'B0' ? { ...b, lengthMm: 2000 } : b)) }
    const sim2 = new Simulation(longStart, [plan({ headcode: '6M50', lengthMm: 1500, speedKmh: 40, route: ['B0', 'B1', 'B2', 'B3', 'B4', 'B5'] })], { seed: 3, dropoutChance: 0 })
    sim2.start()
    const counts = new Set<number>()
    for (let t = 0; t < 60_000; t += 50) {
      sim2.step(50, {})
      counts.add(sim2.view()[0]!.blocks.length)
    }
    // wholly in the long B0, then over two or three of the 1000 mm blocks
    expect([...counts].sort()).toEqual([1, 2, 3])
  })

  it('drops a detector out briefly on dirty track, only while the train is on the block', () => {
    const sim = new Simulation(circle(4, 1000, false), [plan({ headcode: '1F42', lengthMm: 300, speedKmh: 54.864, route: ['B0', 'B1', 'B2', 'B3'] })], { seed: 4, dropoutChance: 1, speedVariation: 0 })
    sim.start()
    const ps = runUntil(sim, {}, () => false, 40_000).filter(p => p.topic.startsWith('detector/'))
    let dropouts = 0
    let entries = 0
    const state = new Map<string, string>()
    for (let i = 0; i < ps.length; i++) {
      const p = ps[i]!
      if (occupiedIn(p.payload) && state.get(p.topic) !== 'dropout') entries++
      if (p.payload === '0') {
        const back = ps.slice(i + 1).find(q => q.topic === p.topic)
        if (back && occupiedIn(back.payload) && back.at - p.at <= 100) {
          dropouts++
          expect(back.at - p.at).toBeGreaterThanOrEqual(30)
          state.set(p.topic, 'dropout')
          continue
        }
      }
      state.set(p.topic, p.payload)
    }
    // every block entered (the train stays 6.5 s, longer than the latest dropout start) drops out once
    expect(entries).toBeGreaterThan(5)
    expect(dropouts).toBeGreaterThanOrEqual(entries - 1)
  })
})

describe('signals', () => {
  const oneTrain = () => plan({ headcode: '1F42', lengthMm: 300, speedKmh: 54.864, route: ['B0', 'B1', 'B2', 'B3'] })

  it('stops a train at a signal showing danger, short of the block it protects, and goes on when it clears', () => {
    const sim = new Simulation(circle(4), [oneTrain()], { seed: 5, spadChance: 0, dropoutChance: 0 })
    sim.start()
    const aspects = { ...proceedAll(4), S2: 'danger' as const }
    const ps = runUntil(sim, aspects, () => false, 30_000)
    expect(detectorTrail(ps)).toEqual(['D1=1', 'D0=0'])
    expect(sim.view()[0]).toMatchObject({ blocks: ['B1'], mode: 'waiting', waitingFor: 'S2 at danger', spads: 0 })
    const after = runUntil(sim, { ...aspects, S2: 'caution' }, () => false, 1000)
    expect(detectorTrail(after)[0]).toBe('D2=1')
  })

  it('waits at a signal that has shown nothing yet', () => {
    const sim = new Simulation(circle(4), [oneTrain()], { seed: 5, dropoutChance: 0 })
    sim.start()
    expect(runUntil(sim, {}, () => false, 10_000)).toEqual([])
    expect(sim.view()[0]!.waitingFor).toBe('S1 shows nothing yet')
  })

  it('runs past a signal at danger with spad chance 1', () => {
    const sim = new Simulation(circle(4), [oneTrain()], { seed: 6, spadChance: 1, dropoutChance: 0 })
    sim.start()
    const log: string[] = []
    const ps: Publish[] = []
    for (let t = 0; t < 12_000; t += 10) {
      const r = sim.step(10, { ...proceedAll(4), S2: 'danger' })
      ps.push(...r.publishes)
      log.push(...r.log.map(l => l.text))
    }
    expect(detectorTrail(ps).slice(0, 3)).toEqual(['D1=1', 'D0=0', 'D2=1'])
    expect(log).toContain('1F42 runs past S2 at danger')
    expect(sim.view()[0]!.spads).toBe(1)
  })

  it('every signal passed at danger in the simulation is an alarm in the signalling engine, and only those', { timeout: 60_000 }, () => {
    const quiet = runWithEngine(demoLayout(), demoPlans(), { seed: 11, spadChance: 0, dropoutChance: 0 }, 3_600_000)
    // no signal passed at danger and no turnout moved under a lock
    expect(quiet.engine.state().alarms).toEqual([])
    // the trains that need no locked turnout keep going round: an hour is many rounds for each
    for (const v of quiet.sim.view().filter(v => v.headcode === '1F42' || v.headcode === '2J01')) expect(v.laps, v.headcode).toBeGreaterThanOrEqual(10)

    // on a circle of two-block sections two trains keep meeting signals at danger with the block ahead free
    const ring = circle(6)
    const twoBlockSections = valid({ ...ring, signals: ring.signals.filter((_, i) => i % 2 === 0) })
    const trains = [
      plan({ headcode: '1F42', lengthMm: 300, speedKmh: 50, route: ['B0', 'B1', 'B2', 'B3', 'B4', 'B5'] }),
      plan({ headcode: '2J01', lengthMm: 300, speedKmh: 30, route: ['B3', 'B4', 'B5', 'B0', 'B1', 'B2'] }),
    ]
    const wild = runWithEngine(twoBlockSections, trains, { seed: 11, spadChance: 1, dropoutChance: 0 }, 600_000)
    const spads = wild.sim.view().reduce((n, v) => n + v.spads, 0)
    expect(spads).toBeGreaterThan(0)
    const alarms = wild.engine.state().alarms
    expect(alarms.length).toBe(spads)
    expect(alarms.every(a => a.kind === 'spad')).toBe(true)
    const passed = wild.log.filter(l => / runs past \S+ at danger$/.test(l)).map(l => l.split(' ')[3])
    expect(alarms.map(a => a.signal)).toEqual(passed)
  })
})

describe('interlocking', () => {
  // Locking rule: 49 CFR 236.207 / 236.314 [P], detector locking [M] (REFERENCES.md §10). With nobody at the
  // panel, SF1 (fiddle road 1 exit) shows proceed over T5 whenever the up approach is free, so T5 stays locked
  // normal: 6M50 in fiddle road 2 waits for it, as a train at an interlocked junction waits for a signaller.
  it('never throws a locked turnout: 6M50 waits in fiddle road 2 for T5, locked by SF1, and says so', { timeout: 60_000 }, () => {
    const r = runWithEngine(demoLayout(), demoPlans(), { seed: 12, spadChance: 0, dropoutChance: 0.1 }, 1_200_000)
    expect(r.engine.state().alarms.filter(a => a.kind === 'turnout-under-lock')).toEqual([])
    expect(r.sim.view().find(v => v.headcode === '6M50')).toMatchObject({ blocks: ['FY2'], laps: 0 })
    expect(r.log).toContain('6M50 waits in FY2: T5 is not set for FY2 (locked: SF1 reads over it)')
    // 2T33, in fiddle road 4, waits likewise for T7, which SF3 reads over
    expect(r.log).toContain('2T33 waits in FY4: T7 is not set for FY4 (locked: SF3 reads over it)')
  })

  it('once SF1 is held, as a signaller would to release T5, sets T5 for 6M50, which leaves; still no lock alarm', () => {
    const layout = demoLayout()
    const plans = demoPlans().filter(p => p.headcode === '1F42' || p.headcode === '6M50')
    const sim = new Simulation(layout, plans, { seed: 13, spadChance: 0, dropoutChance: 0 })
    const engine = createEngine(layout)
    const feedAll = (ps: Publish[]) => { for (const p of ps) feed(engine, p, p.at + 1) }
    const aspects = () => Object.fromEntries(Object.entries(engine.indications()).map(([id, i]) => [id, i.aspect]))
    feedAll(sim.start().publishes)
    let heldAt: number | null = null
    for (let t = 0; t < 900_000 && !sim.view()[1]!.blocks.includes('UM1'); t += 50) {
      // hold SF1 once 1F42 has left fiddle road 1 and the up approach
      if (heldAt === null && sim.view()[0]!.blocks.every(b => b !== 'FY1' && b !== 'UM1') && sim.time() > 20_000) {
        heldAt = sim.time()
        engine.apply({ type: 'override', signal: 'SF1', mode: 'hold', at: sim.time() })
        sim.setOverride('SF1', 'hold') // the indication Blockbell publishes carries the override
      }
      feedAll(sim.step(50, aspects()).publishes)
    }
    expect(heldAt).not.toBeNull()
    expect(engine.state().turnouts.T5).toBe('reverse')
    expect(sim.view()[1]!.blocks).toContain('UM1')
    expect(engine.state().alarms).toEqual([])
  })

  it('leaves the turnouts of an area a signaller holds to them: its trains wait at the signal until the route is set', () => {
    const layout = demoLayout()
    const plans = demoPlans().filter(p => p.headcode === '6M50')
    const sim = new Simulation(layout, plans, { seed: 14, spadChance: 0, dropoutChance: 0 })
    const engine = createEngine(layout)
    const feedAll = (ps: Publish[]) => { for (const p of ps) feed(engine, p, p.at + 1) }
    const aspects = () => Object.fromEntries(Object.entries(engine.indications()).map(([id, i]) => [id, i.aspect]))
    expect(sim.setAreaHeld('main', true).log[0]!.text).toBe('area main is held by a signaller: its turnouts are left to them')
    feedAll(sim.start().publishes)
    const ps: Publish[] = []
    for (let t = 0; t < 60_000; t += 50) ps.push(...sim.step(50, aspects()).publishes)
    feedAll(ps)
    // T5 (main line) lies normal; the train needs it reverse and does not throw it itself
    expect(ps.filter(p => p.topic.startsWith('turnout/'))).toEqual([])
    expect(sim.view()[0]).toMatchObject({ blocks: ['FY2'], waitingFor: 'T5 is not set for FY2 (left to the signaller holding main)' })
    // the signaller holds SF1 (it reads over T5), then sets the route: the train goes
    engine.apply({ type: 'override', signal: 'SF1', mode: 'hold', at: sim.time() })
    sim.setOverride('SF1', 'hold')
    feedAll(sim.requestTurnout('T5', 'reverse', 'Tam Oakridge').publishes)
    for (let t = 0; t < 30_000 && !sim.view()[0]!.blocks.includes('UM1'); t += 50) feedAll(sim.step(50, aspects()).publishes)
    expect(sim.view()[0]!.blocks).toContain('UM1')
    expect(engine.state().alarms).toEqual([])
    // released again: the trains set the area's turnouts themselves
    expect(sim.setAreaHeld('main', false).log[0]!.text).toBe('area main is free again: trains set its turnouts')
  })
})

describe('a restarted fake layout', () => {
  // Blockbell keeps running while the layout is switched off and on again. Real turnouts stay where they were
  // left; a fake layout that started them all normal again would move locked turnouts under Blockbell's eyes.
  function restart(remembered: boolean) {
    const layout = demoLayout()
    const plans = demoPlans().filter(p => p.headcode === '1F42' || p.headcode === '6M50')
    const engine = createEngine(layout)
    const aspects = () => Object.fromEntries(Object.entries(engine.indications()).map(([id, i]) => [id, i.aspect]))
    let clock = 0
    const feedAll = (ps: Publish[]) => { for (const p of ps) feed(engine, p, clock + p.at + 1) }
    // the first run: once 1F42 is away, a signaller holds SF1, so T5 is set reverse for 6M50, which runs out
    // over it onto UM1 (as in "once SF1 is held" above)
    const first = new Simulation(layout, plans, { seed: 13, spadChance: 0, dropoutChance: 0 })
    feedAll(first.start().publishes)
    let held = false
    for (let t = 0; t < 900_000 && !(engine.state().turnouts.T5 === 'reverse' && engine.state().occupied.UM1); t += 50) {
      if (!held && first.view()[0]!.blocks.every(b => b !== 'FY1' && b !== 'UM1') && first.time() > 20_000) {
        held = true
        engine.apply({ type: 'override', signal: 'SF1', mode: 'hold', at: first.time() })
        first.setOverride('SF1', 'hold')
      }
      feedAll(first.step(50, aspects()).publishes)
    }
    const left = first.turnoutPositions()
    // switched off with 6M50 on UM1, over T5 reverse; on again with the trains back at their start
    clock = first.time() + 1000
    const before = engine.state().alarms.length
    const sim = new Simulation(layout, plans, { seed: 14, spadChance: 0, dropoutChance: 0, ...(remembered ? { turnouts: left } : {}) })
    sim.setOverride('SF1', 'hold')
    const start = sim.start().publishes
    feedAll(start)
    for (let t = 0; t < 120_000; t += 50) feedAll(sim.step(50, aspects()).publishes)
    return { left, start, lockAlarms: engine.state().alarms.slice(before).filter(a => a.kind === 'turnout-under-lock') }
  }

  it('starts from the positions it kept: it reports them, and Blockbell sees no move under a lock', { timeout: 60_000 }, () => {
    const r = restart(true)
    expect(r.left.T5).toBe('reverse') // the first run left T5 reverse
    const reported = Object.fromEntries(r.start.filter(p => /^turnout\/[^/]+$/.test(p.topic)).map(p => [p.topic.slice('turnout/'.length), p.payload]))
    expect(reported.T5).toBe('reverse')
    expect(r.lockAlarms).toEqual([])
  })

  it('started afresh instead (every turnout normal), it moves turnouts under a lock: the reason for keeping them', { timeout: 60_000 }, () => {
    expect(restart(false).lockAlarms.length).toBeGreaterThan(0)
  })
})

describe('keeping trains apart', () => {
  it.each([
    ['obeying signals, spad chance 1', { spadChance: 1, dropoutChance: 0.3 }],
    ['ignoring signals', { ignoreSignals: true, dropoutChance: 0.3 }],
  ])('never puts two trains in one block (%s)', { timeout: 60_000 }, (_, opts) => {
    const r = runWithEngine(demoLayout(), demoPlans(), { seed: 21, ...opts }, 1_800_000, 50, true)
    for (const views of r.views) {
      const blocks = views.flatMap(v => v.blocks)
      expect(new Set(blocks).size).toBe(blocks.length)
    }
    // obeying signals, the trains that need a turnout an automatic signal locks wait (see interlocking below)
    const moving = 'ignoreSignals' in opts ? r.sim.view() : r.sim.view().filter(v => v.headcode === '1F42' || v.headcode === '2J01')
    expect(moving.every(v => v.laps >= 3)).toBe(true)
  })

  it('a train passing a signal at danger never runs into an occupied block', () => {
    const plans = [
      plan({ headcode: '1F42', lengthMm: 300, speedKmh: 54.864, route: ['B0', 'B1', 'B2'] }),
      plan({ headcode: '2J01', lengthMm: 300, speedKmh: 54.864, route: [{ block: 'B2', dwellMs: 60_000 }, 'B0', 'B1'] }),
    ]
    const sim = new Simulation(circle(3), plans, { seed: 7, spadChance: 1, dropoutChance: 0 })
    sim.start()
    const ps = runUntil(sim, { S0: 'danger', S1: 'proceed', S2: 'danger' }, () => false, 20_000)
    expect(detectorTrail(ps)).toEqual(['D1=1', 'D0=0'])
    expect(sim.view()[0]).toMatchObject({ blocks: ['B1'], waitingFor: 'B2 is occupied by 2J01', spads: 0 })
  })
})

describe('turnouts', () => {
  it('sets every turnout a train runs through before the train reaches it', { timeout: 30_000 }, () => {
    const layout = demoLayout()
    const topo = topologyOf(layout)
    const plans = demoPlans()
    const stepMs = 50
    const r = runWithEngine(layout, plans, { seed: 31, spadChance: 0.2, dropoutChance: 0.05 }, 1_800_000, stepMs, true)
    // views[s] is the state after step s, at time (s + 1) * stepMs
    const viewIndex = (at: number) => Math.ceil(at / stepMs) - 1
    const setAt = new Map<string, { at: number, position: string }>()
    let pi = 0
    let checked = 0
    let waitedFor = 0
    for (let s = 1; s < r.views.length; s++) {
      const before = new Map(setAt)
      while (pi < r.publishes.length && r.publishes[pi]!.at <= (s + 1) * stepMs) {
        const p = r.publishes[pi++]!
        if (p.topic.startsWith('turnout/')) setAt.set(p.topic.slice(8), { at: p.at, position: p.payload })
      }
      r.views[s]!.forEach((v, i) => {
        const front = v.blocks.at(-1)
        if (front === undefined || front === r.views[s - 1]![i]!.blocks.at(-1)) return
        const route = plans[i]!.route
        const at = (k: number) => route[(k + route.length) % route.length]!
        const here = at(v.step)
        const from = here.lift ? null : at(v.step - 1).block
        const next = at(v.step + 1).lift ? null : at(v.step + 1).block
        for (const need of needsThrough(topo, here.block, from, next)) {
          const set = before.get(need.turnout.id)
          const what = `${v.headcode} entering ${here.block} at ${(s + 1) * stepMs} ms through ${need.turnout.id}`
          // set for this train, in an earlier step than the one in which it entered
          expect(set?.position, what).toBe(need.leg === need.turnout.normal ? 'normal' : 'reverse')
          // and well ahead of it, unless another train was still on the turnout until just before
          if ((s + 1) * stepMs - set!.at < 1000) {
            const k = viewIndex(set!.at)
            const justBefore = [...r.views[k - 2]!, ...r.views[k - 1]!]
            const onIt = justBefore.filter(o => o.headcode !== v.headcode && o.blocks.includes(need.turnout.block))
            expect(onIt.length, what).toBeGreaterThan(0)
            waitedFor++
          }
          checked++
        }
      })
    }
    expect(checked).toBeGreaterThan(100)
    expect(waitedFor).toBeLessThan(checked / 2)
  })

  it('obeys a request to throw a turnout, even under a train; a train on it waits, the turnout being track-locked', () => {
    const layout = demoLayout()
    const sim = new Simulation(layout, [demoPlans()[0]!], { seed: 8, dropoutChance: 0, ignoreSignals: true })
    sim.start()
    runUntil(sim, {}, () => sim.view()[0]!.blocks.at(-1) === 'UM4', 120_000)
    const req = sim.requestTurnout('T4', 'reverse', 'Tam Oakridge')
    expect(req.publishes).toEqual([{ topic: 'turnout/T4', payload: 'reverse', retain: true, at: sim.time() }])
    expect(req.log[0]!.text).toBe('T4 thrown reverse on request by Tam Oakridge (under 1F42)')
    // the trains never throw a turnout under a train (track locking): 1F42 waits on T4 until someone sets it
    const stuck = runUntil(sim, {}, () => false, OPERATOR_HOLD_MS + 30_000)
    expect(stuck.filter(p => p.topic === 'turnout/T4')).toEqual([])
    expect(sim.view()[0]).toMatchObject({ blocks: ['UM4'], waitingFor: 'T4 is not set for FY1 (locked: UM4 occupied)' })
    expect(sim.requestTurnout('T4', 'normal').publishes).toHaveLength(1)
    runUntil(sim, {}, () => sim.view()[0]!.blocks.includes('FY1'), 60_000)
    expect(sim.view()[0]!.blocks).toContain('FY1')
  })

  it('leaves a turnout thrown on request alone for a while, then sets it for its train once it is free', () => {
    const layout = demoLayout()
    const sim = new Simulation(layout, [demoPlans()[0]!], { seed: 8, dropoutChance: 0, ignoreSignals: true })
    sim.start()
    runUntil(sim, {}, () => sim.view()[0]!.blocks.at(-1) === 'UM2', 120_000)
    const req = sim.requestTurnout('T4', 'reverse', 'Tam Oakridge')
    expect(req.log[0]!.text).toBe('T4 thrown reverse on request by Tam Oakridge')
    const requestedAt = sim.time()
    const ps = runUntil(sim, {}, () => sim.view()[0]!.blocks.includes('FY1'), 120_000)
    const thrownBack = ps.find(p => p.topic === 'turnout/T4')!
    expect(thrownBack.payload).toBe('normal')
    expect(thrownBack.at - requestedAt).toBeGreaterThanOrEqual(OPERATOR_HOLD_MS)
    const entered = ps.findIndex(p => p.topic === 'detector/D13' && occupiedIn(p.payload))
    expect(entered).toBeGreaterThan(ps.indexOf(thrownBack))
    expect(sim.view()[0]!.blocks).toEqual(['UM4', 'FY1'])
  })

  it('ignores requests for unknown turnouts and positions', () => {
    const sim = new Simulation(demoLayout(), demoPlans(), { seed: 9 })
    sim.start()
    expect(sim.requestTurnout('T99', 'normal').publishes).toEqual([])
    expect(sim.requestTurnout('T1', 'sideways').publishes).toEqual([])
  })

  it('runs the branch train out to Carrowmere, reverses it there and lifts it back in the fiddle yard', () => {
    const branch = demoPlans().find(p => p.headcode === '2T33')!
    const sim = new Simulation(demoLayout(), [branch], { seed: 10, dropoutChance: 0, ignoreSignals: true })
    const start = sim.start().publishes
    expect(start.filter(p => p.topic.startsWith('turnout/')).every(p => p.retain)).toBe(true)
    // T7 (in DM1) is set for the move out of fiddle road 4 before anything is reported: the first report says so
    expect(start.filter(p => p.topic === 'turnout/T7')).toEqual([expect.objectContaining({ payload: 'reverse' })])
    expect(start.findIndex(p => p.topic === 'turnout/T7')).toBeLessThan(start.findIndex(p => p.topic.startsWith('detector/')))
    const ps = runUntil(sim, {}, () => sim.view()[0]!.laps === 1 && sim.view()[0]!.blocks[0] === 'FY4', 600_000, 50)
    const trail = ps.map(p => (p.topic.startsWith('turnout/') ? `${p.topic.slice(8)}:${p.payload}` : `${p.topic.slice(9)}=${occupiedIn(p.payload) ? '1' : p.payload}`))
    // each turnout is set as the train enters the block of the signal whose section holds it
    expect(trail).toEqual([
      'D05=1', 'T1:reverse', 'D16=0', // into DM1; T1 (in DM2) set for the branch, section of SD1
      'D06=1', 'D05=0', 'D09=1', 'D06=0', 'D11=1', 'D09=0', // DM2, JD, BR (T3 already normal for the trailing move)
      'D12=1', 'D11=0', // into Carrowmere platform
      'T3:reverse', // once the rear has left BR: T3 facing towards JU for the way back
      'D11=1', 'D12=0', // reversed, out again
      'D10=1', 'T2:reverse', 'D11=0', // into JU; T2 (in UM3) for the trailing move, section of SB3
      'D03=1', 'T4:reverse', 'D10=0', // into UM3; T4 (in UM4) towards fiddle road 2, section of SU3
      'D04=1', 'D03=0', 'D14=1', 'D04=0',
      'D14=0', 'D16=1', // lifted from fiddle road 2 back to fiddle road 4
    ])
  })
})

describe('seeded runs', () => {
  it('gives the same publishes for the same seed, and others for another seed', { timeout: 60_000 }, () => {
    const a = runWithEngine(demoLayout(), demoPlans(), { seed: 42, spadChance: 0.3 }, 900_000)
    const b = runWithEngine(demoLayout(), demoPlans(), { seed: 42, spadChance: 0.3 }, 900_000)
    const c = runWithEngine(demoLayout(), demoPlans(), { seed: 43, spadChance: 0.3 }, 900_000)
    expect(a.publishes.length).toBeGreaterThan(200)
    expect(b.publishes).toEqual(a.publishes)
    expect(b.log).toEqual(a.log)
    expect(c.publishes).not.toEqual(a.publishes)
  })
})
