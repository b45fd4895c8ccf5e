// Shared pieces of the fake layout tests: the demo layout and plans, small hand-built layouts, and a loop that
// runs the simulation against the real signalling engine (what the Blockbell server does with the publishes).
import { readFileSync } from 'node:fs'
import { createEngine, validateLayout, type Aspect, type Engine, type Layout } from '#shared/signalling'
import type { LayoutInput } from '#shared/schemas/layout'
import type { Publish } from '../../../fake-hardware/output'
import { TrainPlanFile, type TrainPlan, type TrainPlanInput, TrainPlan as TrainPlanSchema } from '../../../fake-hardware/plan'
import { Simulation, type SimulationOptions, type TrainView } from '../../../fake-hardware/simulation'

export const ROOT = new URL('../../../', import.meta.url)

export function valid(def: unknown): Layout {
  const r = validateLayout(def)
  if (!r.ok) throw new Error(`invalid test layout: ${JSON.stringify(r.errors)}`)
  return r.layout
}

export const demoLayout = (): Layout => valid(JSON.parse(readFileSync(new URL('shared/layouts/demo-layout.json', ROOT), 'utf8')))

export const demoPlans = (): TrainPlan[] =>
  TrainPlanFile.parse(JSON.parse(readFileSync(new URL('fake-hardware/trains/wrenfold.json', ROOT), 'utf8'))).trains

export const plan = (p: TrainPlanInput): TrainPlan => TrainPlanSchema.parse(p)

/**
 * A circle of `n` blocks B0..B(n-1) of `lengthMm` each, in OO scale, trains running B0 -> B1 -> ... -> B0.
 * Signal Sk stands at the exit of B(k-1) and protects Bk (two-aspect), so each section is one block.
 */
export function circle(n: number, lengthMm = 1000, signals = true): Layout {
  const blocks = Array.from({ length: n }, (_, i) => ({ id: `B${i}`, name: `Block ${i}`, lengthMm, detectors: [`D${i}`] }))
  const links = blocks.map((_, i) => ({ from: `B${i}`, to: `B${(i + 1) % n}` }))
  const sigs = signals
    ? blocks.map((_, i) => ({ id: `S${i}`, name: `Signal ${i}`, kind: 'two-aspect' as const, from: `B${(i + n - 1) % n}`, protects: `B${i}` }))
    : []
  const def: LayoutInput = { schema: 1, name: 'Test circle', scale: { name: 'OO', ratio: 76.2 }, blocks, links, signals: sigs }
  return valid(def)
}

export interface Run {
  sim: Simulation
  engine: Engine
  publishes: Publish[]
  log: string[]
  /** Train views after each step. */
  views: TrainView[][]
}

const aspectsOf = (engine: Engine): Record<string, Aspect> =>
  Object.fromEntries(Object.entries(engine.indications()).map(([id, ind]) => [id, ind.aspect]))

/** A detector payload says occupied: `1`, or JSON with `occupied: true` (and the train's decoder address). */
export function occupiedIn(payload: string): boolean {
  return payload === '1' || (payload.startsWith('{') && (JSON.parse(payload) as { occupied?: boolean }).occupied === true)
}

/** Feeds one publish to the engine as the Blockbell bridge would (no debounce). */
export function feed(engine: Engine, p: Publish, at: number): void {
  const [kind, id] = p.topic.split('/')
  if (kind === 'detector') engine.apply({ type: 'detector', detector: id!, occupied: occupiedIn(p.payload), at })
  else if (kind === 'turnout') engine.apply({ type: 'turnout', turnout: id!, position: p.payload as 'normal' | 'reverse', at })
}

/**
 * Runs `plans` on `layout` for `ms`, feeding every publish to a real engine and the engine's aspects back to
 * the trains after each step. Returns everything that was published.
 */
export function runWithEngine(layout: Layout, plans: TrainPlan[], options: SimulationOptions, ms: number, stepMs = 50, keepViews = false): Run {
  const sim = new Simulation(layout, plans, options)
  const engine = createEngine(layout)
  const run: Run = { sim, engine, publishes: [], log: [], views: [] }
  const take = (r: { publishes: Publish[], log: { text: string }[] }) => {
    for (const p of r.publishes) {
      feed(engine, p, p.at + 1)
      run.publishes.push(p)
    }
    for (const l of r.log) run.log.push(l.text)
  }
  take(sim.start())
  for (let t = 0; t < ms; t += stepMs) {
    take(sim.step(stepMs, aspectsOf(engine)))
    if (keepViews) run.views.push(sim.view())
  }
  return run
}

/** Detector publishes only, as "D03=1". */
export const detectorTrail = (ps: readonly Publish[]): string[] =>
  ps.filter(p => p.topic.startsWith('detector/')).map(p => `${p.topic.slice('detector/'.length)}=${occupiedIn(p.payload) ? '1' : p.payload}`)
