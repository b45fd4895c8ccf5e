import { z } from 'zod'
import { ItemId, type Layout } from '#shared/schemas/layout'
import { onward, topologyOf } from '#shared/signalling/topology'
import type { Random } from './random'

/**
 * Train plans for the fake layout: which trains run, how long and fast they are, and the round each one
 * repeats. A route is a cycle of blocks: after the last step the train carries on with the first.
 * - Consecutive blocks must be linked in the layout (`from` -> `to`).
 * - A block followed by the block it was entered from is a reversal: the train runs in to the end, stops and
 *   comes back out (it must fit in that block).
 * - A step with `lift: true` is reached by hand, not along the track: the train is lifted off the previous
 *   block and set down on this one (a fiddle-yard move). Blockbell then sees an undescribed train.
 */

/** A headcode: class digit, destination letter, two digits (e.g. 1F42, 2J01). */
export const HEADCODE = /^[0-9][A-Z][0-9]{2}$/

export const RouteStep = z.object({
  block: ItemId,
  /** Stop at the end of this block for this long (a station stop, a wait in the fiddle yard). */
  dwellMs: z.number().nonnegative().max(600_000).optional(),
  lift: z.boolean().optional(),
})
export type RouteStep = z.output<typeof RouteStep>

export const TrainPlan = z.object({
  headcode: z.string().regex(HEADCODE, 'a headcode is a digit, a capital letter and two digits, e.g. 1F42'),
  /** Decoder address of its locomotive, reported by the detectors it occupies (as RailCom detectors do). */
  address: z.number().int().min(1).max(10239).optional(),
  /** A few words for the log, e.g. "up express". */
  name: z.string().trim().max(60).optional(),
  /** Length of the train on the model, in millimetres. */
  lengthMm: z.number().positive().max(5000),
  /** Scale speed the train runs at, in scale km/h. */
  speedKmh: z.number().positive().max(300),
  route: z.array(z.union([ItemId.transform((block): RouteStep => ({ block })), RouteStep])).min(2, 'a route has at least two steps'),
})
export type TrainPlan = z.output<typeof TrainPlan>
export type TrainPlanInput = z.input<typeof TrainPlan>

export const TrainPlanFile = z.object({ trains: z.array(TrainPlan).min(1).max(12) })

export interface PlanError {
  path: string
  message: string
}

const at = <T>(items: readonly T[], i: number): T => items[((i % items.length) + items.length) % items.length]!

/**
 * Checks train plans against a layout. Errors name the train and step, e.g. `trains[1].route[4]`.
 */
export function checkPlans(layout: Layout, plans: readonly TrainPlan[]): PlanError[] {
  const topo = topologyOf(layout)
  const errors: PlanError[] = []
  const err = (path: string, message: string) => errors.push({ path, message })
  const links = new Set(layout.links.map(l => `${l.from}>${l.to}`))
  const headcodes = new Set<string>()
  const starts = new Map<string, string>()
  plans.forEach((p, t) => {
    const base = `trains[${t}]`
    if (headcodes.has(p.headcode)) err(`${base}.headcode`, `headcode ${p.headcode} is used by two trains`)
    headcodes.add(p.headcode)
    const steps = p.route
    const len = (i: number) => topo.blockById.get(at(steps, i).block)?.lengthMm ?? 0
    const unknown = steps.findIndex(s => !topo.blockById.has(s.block))
    if (unknown >= 0) {
      err(`${base}.route[${unknown}]`, `unknown block "${steps[unknown]!.block}"`)
      return
    }
    const start = steps[0]!.block
    if (starts.has(start)) err(`${base}.route[0]`, `${p.headcode} and ${starts.get(start)} both start in block ${start}`)
    starts.set(start, p.headcode)
    if (p.lengthMm > len(0)) err(`${base}.lengthMm`, `the train (${p.lengthMm} mm) does not fit in its first block ${start} (${len(0)} mm)`)
    let loop = 0
    steps.forEach((s, i) => {
      loop += len(i)
      const path = `${base}.route[${i}]`
      const next = at(steps, i + 1)
      if (next.lift) {
        if (next.block === s.block) err(`${base}.route[${(i + 1) % steps.length}]`, 'a lift goes to another block')
        if (p.lengthMm > len(i)) err(path, `the train must fit in ${s.block} to be lifted off it`)
        if (p.lengthMm > len(i + 1)) err(`${base}.route[${(i + 1) % steps.length}]`, `the train does not fit in ${next.block}`)
        return
      }
      if (!links.has(`${s.block}>${next.block}`)) err(path, `no link from ${s.block} to ${next.block}`)
      if (s.lift) return
      const prev = at(steps, i - 1).block
      if (next.block === prev) {
        if (p.lengthMm > len(i)) err(path, `the train (${p.lengthMm} mm) must fit in ${s.block} (${len(i)} mm) to reverse there`)
      } else if (!onward(topo, s.block, prev).includes(next.block)) {
        err(path, `a train cannot run ${prev} -> ${s.block} -> ${next.block}`)
      }
    })
    if (loop < 2 * p.lengthMm) err(`${base}.route`, 'the route is too short for the train')
  })
  return errors
}

/**
 * Simple round trips through the layout: cycles of blocks along which a train can run for ever without
 * reversing. Each is listed once, starting at its first block in layout order.
 */
export function findCycles(layout: Layout, maxBlocks = 40, maxCycles = 60): string[][] {
  const topo = topologyOf(layout)
  const order = new Map(layout.blocks.map((b, i) => [b.id, i]))
  const cycles: string[][] = []
  for (const start of layout.blocks) {
    const path = [start.id]
    const onPath = new Set(path)
    const walk = (prev: string | null, cur: string): void => {
      if (cycles.length >= maxCycles) return
      for (const nb of onward(topo, cur, prev)) {
        if (nb === start.id) {
          // the cycle must also be runnable through its first block
          const second = path[1]
          if (second !== undefined && onward(topo, start.id, cur).includes(second)) cycles.push([...path])
          continue
        }
        // only cycles whose first block comes first in layout order: each cycle is found once
        if (onPath.has(nb) || order.get(nb)! < order.get(start.id)! || path.length >= maxBlocks) continue
        path.push(nb)
        onPath.add(nb)
        walk(cur, nb)
        path.pop()
        onPath.delete(nb)
      }
    }
    walk(null, start.id)
  }
  return cycles
}

const CLASS_DIGITS = ['1', '2', '2', '4', '6'] as const

function headcode(rng: Random, taken: Set<string>): string {
  for (;;) {
    const h = `${rng.pick(CLASS_DIGITS)}${String.fromCharCode(65 + rng.int(26))}${String(rng.int(100)).padStart(2, '0')}`
    if (!taken.has(h)) {
      taken.add(h)
      return h
    }
  }
}

/**
 * Trains for a layout that has no plan of its own: up to `count` trains on the layout's round trips, at most
 * one train per three blocks of a round trip, each starting in its own block at 30-60 scale km/h.
 */
export function autoPlans(layout: Layout, count: number, rng: Random): TrainPlan[] {
  const cycles = findCycles(layout).sort((a, b) => b.length - a.length)
  if (cycles.length === 0) return []
  const lengthOf = new Map(layout.blocks.map(b => [b.id, b.lengthMm]))
  const used = new Set<string>()
  const perCycle = new Map<number, number>()
  const headcodes = new Set<string>()
  const plans: TrainPlan[] = []
  for (let attempt = 0; plans.length < count && attempt < count * cycles.length * 4; attempt++) {
    const c = attempt % cycles.length
    const cycle = cycles[c]!
    if ((perCycle.get(c) ?? 0) >= Math.floor(cycle.length / 3)) continue
    const shortest = Math.min(...cycle.map(b => lengthOf.get(b)!))
    const lengthMm = Math.round(Math.min(600, shortest * 0.6))
    const offset = rng.int(cycle.length)
    const startAt = [...cycle.keys()].map(k => (k + offset) % cycle.length).find(k => !used.has(cycle[k]!))
    if (startAt === undefined) continue
    const blocks = [...cycle.slice(startAt), ...cycle.slice(0, startAt)]
    used.add(blocks[0]!)
    perCycle.set(c, (perCycle.get(c) ?? 0) + 1)
    plans.push({
      headcode: headcode(rng, headcodes),
      lengthMm,
      speedKmh: Math.round(rng.between(30, 60)),
      route: blocks.map((block, i) => (i === 0 ? { block, dwellMs: 5000 } : { block })),
    })
  }
  return plans
}
