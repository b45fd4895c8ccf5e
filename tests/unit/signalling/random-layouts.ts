// Random layouts (a main line, a loop or a line worked both ways, with branches) and random event sequences on
// them, for the property tests of the engine and of the live runtime.
import fc from 'fast-check'
import { validateLayout } from '#shared/signalling'
import type { Layout, LayoutEvent } from '#shared/signalling'

type Kind = 'two-aspect' | 'three-aspect' | 'four-aspect' | 'distant'
const KINDS: Kind[] = ['two-aspect', 'three-aspect', 'four-aspect', 'distant']

export interface Plan {
  n: number
  shape: 'line' | 'loop' | 'both-ways'
  spurs: { at: number, len: number, rejoin: number | null }[]
  signalAt: boolean[]
  kinds: number[]
  endOfLine: boolean[]
  twoDetectors: boolean[]
  indicator: boolean
}

/** Builds a layout from a plan: a main line (open, loop, or worked both ways) with branches leaving and rejoining it. */
export function build(plan: Plan): Layout | null {
  const { n, shape } = plan
  const blocks: { id: string, name: string, lengthMm: number, detectors: string[] }[] = []
  const addBlock = (id: string) => {
    const k = blocks.length
    const detectors = plan.twoDetectors[k % plan.twoDetectors.length] ? [`${id}a`, `${id}b`] : [`${id}a`]
    blocks.push({ id, name: id, lengthMm: 600 + 97 * k, detectors })
  }
  const links: { from: string, to: string }[] = []
  const turnouts: { id: string, block: string, normal: string, reverse: string }[] = []
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
    const t = turnouts.find(x => x.block === l.to && x.id.startsWith('TF'))
    if (plan.indicator && t && kind !== 'distant') s.indicators = { [t.reverse]: '4' }
    signals.push(s)
  })
  const r = validateLayout({ schema: 1, name: 'random', scale: { name: 'HO', ratio: 87.1 }, blocks, links, turnouts, signals })
  return r.ok ? r.layout : null
}

export const planArb: fc.Arbitrary<Plan> = fc.record({
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

export const layoutArb = planArb.map(build).filter((l): l is Layout => l !== null)

/** Random events for a layout: mostly detector reports, with turnouts, overrides, descriptions, acknowledgements and bad input. */
export function eventsArb(layout: Layout): fc.Arbitrary<LayoutEvent[]> {
  const detectors = layout.blocks.flatMap(b => b.detectors)
  const pick = <T>(xs: T[]) => fc.nat(1000).map(i => xs[i % xs.length]!)
  const turnouts = layout.turnouts.map(t => t.id)
  const signals = layout.signals.map(s => s.id)
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
        .tuple(pick(layout.blocks.map(b => b.id)), fc.constantFrom('1A01', '2B02', '', '3C03'))
        .map(([block, description]) => (at: number) => ({ type: 'interpose' as const, block, description, at })),
    },
    { weight: 1, arbitrary: fc.tuple(fc.constantFrom('spad', 'lock'), fc.nat(4)).map(([kind, k]) => (at: number) => ({ type: 'acknowledge' as const, alarm: `${kind}-${k}`, at })) },
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
  const firstDetector = new Map(layout.blocks.map(b => [b.id, b.detectors[0]!]))
  const outs = new Map(layout.blocks.map(b => [b.id, layout.links.filter(l => l.from === b.id).map(l => l.to)]))
  const trainRun: fc.Arbitrary<((at: number) => LayoutEvent)[]> = fc
    .tuple(pick(layout.blocks.map(b => b.id)), fc.boolean(), fc.array(fc.nat(7), { minLength: 1, maxLength: 8 }))
    .map(([start, described, choices]) => {
      const det = (b: string, occupied: boolean) => (at: number) => ({ type: 'detector' as const, detector: firstDetector.get(b)!, occupied, at })
      const evs: ((at: number) => LayoutEvent)[] = [det(start, true)]
      if (described) evs.push(at => ({ type: 'interpose', block: start, description: '9Z99', at }))
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
  const segment = fc.oneof({ weight: 3, arbitrary: one.map(e => [e]) }, { weight: 1, arbitrary: trainRun })
  return fc.array(fc.tuple(segment, fc.integer({ min: 0, max: 20_000 })), { minLength: 3, maxLength: 25 }).map((xs) => {
    let at = 1_700_000_000_000
    return xs.flatMap(([mks, dt]) => mks.map(mk => mk((at += dt))))
  })
}

export const scenarioArb = layoutArb.chain(layout => fc.tuple(fc.constant(layout), eventsArb(layout)))

export function deepFreeze<T>(o: T): T {
  if (o && typeof o === 'object' && !Object.isFrozen(o)) {
    Object.freeze(o)
    for (const v of Object.values(o)) deepFreeze(v)
  }
  return o
}

/**
 * A scenario sure to move a locked turnout, added to the random ones so that the lock alarm is always
 * exercised: on a line A -> J -> N with a facing turnout in J, a train stands on J when the turnout moves.
 */
export function lockedMoveExample(): [Layout, LayoutEvent[]] {
  const b = (id: string) => ({ id, name: id, lengthMm: 900, detectors: [`${id}a`] })
  const r = validateLayout({
    schema: 1, name: 'locked move', scale: { name: 'HO', ratio: 87.1 },
    blocks: ['A', 'J', 'N', 'R'].map(b),
    links: [{ from: 'A', to: 'J' }, { from: 'J', to: 'N' }, { from: 'J', to: 'R' }],
    turnouts: [{ id: 'TJ', block: 'J', normal: 'N', reverse: 'R' }],
    signals: [{ id: 'S1', name: 'S1', kind: 'three-aspect', from: 'A', protects: 'J', endOfLine: 'clear-ahead' }],
  })
  if (!r.ok) throw new Error(JSON.stringify(r.errors))
  const at = 1_700_000_000_000
  return [r.layout, [
    { type: 'turnout', turnout: 'TJ', position: 'normal', at },
    { type: 'turnout', turnout: 'TJ', position: 'reverse', at: at + 1000 }, // route-locked by S1
    { type: 'detector', detector: 'Ja', occupied: true, at: at + 2000 },
    { type: 'turnout', turnout: 'TJ', position: 'normal', at: at + 3000 }, // track-locked
  ]]
}
