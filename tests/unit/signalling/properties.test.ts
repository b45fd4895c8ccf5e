// Property tests on random layouts and random event sequences.
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { applyEvent, computeIndications, createEngine, initialState, validateLayout } from '#shared/signalling'
import type { Change, Layout, LayoutEvent, LayoutState } from '#shared/signalling'
import { run } from './build'

type Kind = 'two-aspect' | 'three-aspect' | 'four-aspect' | 'distant'
const KINDS: Kind[] = ['two-aspect', 'three-aspect', 'four-aspect', 'distant']

interface Plan {
  n: number
  shape: 'line' | 'loop' | 'both-ways'
  spurs: { at: number; len: number; rejoin: number | null }[]
  signalAt: boolean[]
  kinds: number[]
  endOfLine: boolean[]
  twoDetectors: boolean[]
  indicator: boolean
}

/** Builds a layout from a plan: a main line (open, loop, or worked both ways) with branches leaving and rejoining it. */
function build(plan: Plan): Layout | null {
  const { n, shape } = plan
  const blocks: { id: string; name: string; lengthMm: number; detectors: string[] }[] = []
  const addBlock = (id: string) => {
    const k = blocks.length
    const detectors = plan.twoDetectors[k % plan.twoDetectors.length] ? [`${id}a`, `${id}b`] : [`${id}a`]
    blocks.push({ id, name: id, lengthMm: 600 + 97 * k, detectors })
  }
  const links: { from: string; to: string }[] = []
  const turnouts: { id: string; block: string; normal: string; reverse: string }[] = []
  for (let i = 0; i < n; i++) addBlock(`M${i}`)
  const next = (i: number) => (i + 1 < n ? i + 1 : shape === 'loop' ? 0 : null)
  const prev = (i: number) => (i > 0 ? i - 1 : shape === 'loop' ? n - 1 : null)
  for (let i = 0; i < n; i++) {
    const j = next(i)
    if (j !== null) {
      links.push({ from: `M${i}`, to: `M${j}` })
      if (shape === 'both-ways') links.push({ from: `M${j}`, to: `M${i}` })
    }
  }
  if (shape !== 'both-ways') {
    const facingUsed = new Set<number>()
    const trailingUsed = new Set<number>()
    plan.spurs.forEach((s, k) => {
      const at = s.at % n
      const main = next(at)
      if (main === null || facingUsed.has(at)) return
      facingUsed.add(at)
      const ids = Array.from({ length: s.len }, (_, x) => `X${k}_${x}`)
      ids.forEach(addBlock)
      links.push({ from: `M${at}`, to: ids[0]! })
      for (let x = 1; x < ids.length; x++) links.push({ from: ids[x - 1]!, to: ids[x]! })
      turnouts.push({ id: `TF${k}`, block: `M${at}`, normal: `M${main}`, reverse: ids[0]! })
      if (s.rejoin !== null) {
        const r = s.rejoin % n
        const p = prev(r)
        if (p !== null && !trailingUsed.has(r)) {
          trailingUsed.add(r)
          links.push({ from: ids[ids.length - 1]!, to: `M${r}` })
          turnouts.push({ id: `TT${k}`, block: `M${r}`, normal: `M${p}`, reverse: ids[ids.length - 1]! })
        }
      }
    })
  }
  const signals: Record<string, unknown>[] = []
  links.forEach((l, i) => {
    if (!plan.signalAt[i % plan.signalAt.length]) return
    const kind = KINDS[plan.kinds[i % plan.kinds.length]! % KINDS.length]!
    const s: Record<string, unknown> = { id: `S${i}`, name: `S${i}`, kind, from: l.from, protects: l.to }
    s.endOfLine = plan.endOfLine[i % plan.endOfLine.length] ? 'clear-ahead' : 'danger-ahead'
    const t = turnouts.find((x) => x.block === l.to && x.id.startsWith('TF'))
    if (plan.indicator && t && kind !== 'distant') s.indicators = { [t.reverse]: '4' }
    signals.push(s)
  })
  const r = validateLayout({ schema: 1, name: 'random', scale: { name: 'HO', ratio: 87.1 }, blocks, links, turnouts, signals })
  return r.ok ? r.layout : null
}

const planArb: fc.Arbitrary<Plan> = fc.record({
  n: fc.integer({ min: 2, max: 9 }),
  shape: fc.constantFrom('line' as const, 'loop' as const, 'both-ways' as const),
  spurs: fc.array(
    fc.record({ at: fc.nat(20), len: fc.integer({ min: 1, max: 3 }), rejoin: fc.option(fc.nat(20), { nil: null }) }),
    { maxLength: 3 },
  ),
  signalAt: fc.array(fc.boolean(), { minLength: 1, maxLength: 8 }),
  kinds: fc.array(fc.nat(3), { minLength: 1, maxLength: 8 }),
  endOfLine: fc.array(fc.boolean(), { minLength: 1, maxLength: 4 }),
  twoDetectors: fc.array(fc.boolean(), { minLength: 1, maxLength: 4 }),
  indicator: fc.boolean(),
})

const layoutArb = planArb.map(build).filter((l): l is Layout => l !== null)

/** Random events for a layout: mostly detector reports, with turnouts, overrides, descriptions, acknowledgements and bad input. */
function eventsArb(layout: Layout): fc.Arbitrary<LayoutEvent[]> {
  const detectors = layout.blocks.flatMap((b) => b.detectors)
  const pick = <T,>(xs: T[]) => fc.nat(1000).map((i) => xs[i % xs.length]!)
  const turnouts = layout.turnouts.map((t) => t.id)
  const signals = layout.signals.map((s) => s.id)
  const one: fc.Arbitrary<(at: number) => LayoutEvent> = fc.oneof(
    { weight: 10, arbitrary: fc.tuple(pick(detectors), fc.boolean()).map(([detector, occupied]) => (at: number) => ({ type: 'detector' as const, detector, occupied, at })) },
    {
      weight: turnouts.length ? 3 : 0,
      arbitrary: fc
        .tuple(pick(turnouts.length ? turnouts : ['none']), fc.constantFrom('normal' as const, 'reverse' as const, 'unknown' as const))
        .map(([turnout, position]) => (at: number) => ({ type: 'turnout' as const, turnout, position, at })),
    },
    {
      weight: signals.length ? 2 : 0,
      arbitrary: fc
        .tuple(pick(signals.length ? signals : ['none']), fc.constantFrom('hold' as const, 'auto' as const, 'clear' as const))
        .map(([signal, mode]) => (at: number) => ({ type: 'override' as const, signal, mode, at, by: 'p' })),
    },
    {
      weight: 2,
      arbitrary: fc
        .tuple(pick(layout.blocks.map((b) => b.id)), fc.constantFrom('1A01', '2B02', '', '3C03'))
        .map(([block, description]) => (at: number) => ({ type: 'interpose' as const, block, description, at })),
    },
    { weight: 1, arbitrary: fc.nat(4).map((k) => (at: number) => ({ type: 'acknowledge' as const, alarm: `spad-${k}`, at })) },
    {
      weight: 1,
      arbitrary: fc.constantFrom(
        (at: number) => ({ type: 'detector', detector: 'nowhere', occupied: true, at }) as LayoutEvent,
        (at: number) => ({ type: 'turnout', turnout: 'nowhere', position: 'normal', at }) as LayoutEvent,
        (at: number) => ({ type: 'detector', detector: detectors[0], occupied: 'yes', at }) as unknown as LayoutEvent,
        (at: number) => ({ type: 'override', signal: 'toString', mode: 'hold', at }) as LayoutEvent,
        () => ({ type: 'detector', detector: detectors[0], occupied: true, at: Number.NaN }) as LayoutEvent,
        () => ({ type: 'launch' }) as unknown as LayoutEvent,
      ),
    },
  )
  // a train run: a train appears in a block, may be described, and runs on block by block along random links
  const firstDetector = new Map(layout.blocks.map((b) => [b.id, b.detectors[0]!]))
  const outs = new Map(layout.blocks.map((b) => [b.id, layout.links.filter((l) => l.from === b.id).map((l) => l.to)]))
  const trainRun: fc.Arbitrary<((at: number) => LayoutEvent)[]> = fc
    .tuple(pick(layout.blocks.map((b) => b.id)), fc.boolean(), fc.array(fc.nat(7), { minLength: 1, maxLength: 8 }))
    .map(([start, described, choices]) => {
      const det = (b: string, occupied: boolean) => (at: number) => ({ type: 'detector' as const, detector: firstDetector.get(b)!, occupied, at })
      const evs: ((at: number) => LayoutEvent)[] = [det(start, true)]
      if (described) evs.push((at) => ({ type: 'interpose', block: start, description: '9Z99', at }))
      let cur = start
      for (const c of choices) {
        const o = outs.get(cur)!
        if (!o.length) break
        const nb = o[c % o.length]!
        evs.push(det(nb, true), det(cur, false))
        cur = nb
      }
      return evs
    })
  const segment = fc.oneof({ weight: 3, arbitrary: one.map((e) => [e]) }, { weight: 1, arbitrary: trainRun })
  return fc.array(fc.tuple(segment, fc.integer({ min: 0, max: 20_000 })), { minLength: 3, maxLength: 25 }).map((xs) => {
    let at = 1_700_000_000_000
    return xs.flatMap(([mks, dt]) => mks.map((mk) => mk((at += dt))))
  })
}

const scenarioArb = layoutArb.chain((layout) => fc.tuple(fc.constant(layout), eventsArb(layout)))

function deepFreeze<T>(o: T): T {
  if (o && typeof o === 'object' && !Object.isFrozen(o)) {
    Object.freeze(o)
    for (const v of Object.values(o)) deepFreeze(v)
  }
  return o
}

/**
 * The section of a signal as Blockbell defines it, traced independently of the engine: from `protects` along the set
 * route up to and including the block where the next stop signal stands. `known` is false where a turnout on
 * the way is unknown or set against the route.
 */
function referenceSection(layout: Layout, state: LayoutState, s: Layout['signals'][number]): { blocks: string[]; known: boolean } {
  const blocks: string[] = []
  let prev = s.from
  let cur = s.protects
  const seen = new Set<string>()
  const legPos = (t: Layout['turnouts'][number]) => (state.turnouts[t.id] === 'normal' ? t.normal : state.turnouts[t.id] === 'reverse' ? t.reverse : null)
  while (!seen.has(`${prev}>${cur}`)) {
    seen.add(`${prev}>${cur}`)
    blocks.push(cur)
    const here = layout.turnouts.filter((t) => t.block === cur)
    const trailing = here.find((t) => t.normal === prev || t.reverse === prev)
    if (trailing && legPos(trailing) !== prev) return { blocks, known: false }
    let outs = layout.links.filter((l) => l.from === cur && l.to !== prev).map((l) => l.to)
    if (trailing) outs = outs.filter((b) => b !== trailing.normal && b !== trailing.reverse)
    if (outs.length === 0) return { blocks, known: true }
    const facing = here.find((t) => t !== trailing && outs.some((b) => b === t.normal || b === t.reverse))
    let nb = outs[0]!
    if (facing) {
      const leg = legPos(facing)
      if (leg === null || !outs.includes(leg)) return { blocks, known: false }
      nb = leg
    }
    if (layout.signals.some((x) => x.kind !== 'distant' && x.from === cur && x.protects === nb)) return { blocks, known: true }
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
          const changed = layout.signals.map((s) => s.id).filter((id) => JSON.stringify(before[id]) !== JSON.stringify(after[id]))
          const reported = r.changes.flatMap((c) => (c.type === 'indication' ? [c] : []))
          expect(reported.map((c) => c.signal)).toEqual(changed)
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
            const occupied = blocks.some((b) => state.occupied[b])
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
            if (c.type === 'alarm') {
              expect(shownBefore[c.alarm.signal]!.aspect).toBe('danger')
              const sig = layout.signals.find((s) => s.id === c.alarm.signal)!
              expect(sig.protects).toBe(c.alarm.block)
              expect(state.occupied[sig.from]).toBe(true)
            }
          }
          expect(r.state.alarms.length).toBeGreaterThanOrEqual(state.alarms.length)
          expect(r.state.alarms.slice(0, state.alarms.length).map((a) => a.id)).toEqual(state.alarms.map((a) => a.id))
          state = r.state
        }
      }),
      RUNS,
    )
  })
})

describe('createEngine', () => {
  it('agrees with applyEvent on every event sequence', () => {
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
        }
      }),
      RUNS,
    )
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
