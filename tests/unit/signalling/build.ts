// Small hand-built layouts and shorthands for the signalling tests.
import { applyEvent, computeIndications, initialState, validateLayout } from '#shared/signalling'
import type { Aspect, Change, Layout, LayoutEvent, LayoutState } from '#shared/signalling'
import type { LayoutInput } from '#shared/schemas/layout'

type Kind = 'two-aspect' | 'three-aspect' | 'four-aspect' | 'distant'

/** Validates a definition and fails loudly if it is not valid. */
export function valid(def: unknown): Layout {
  const r = validateLayout(def)
  if (!r.ok) throw new Error(`invalid test layout: ${JSON.stringify(r.errors)}`)
  return r.layout
}

export const block = (id: string, lengthMm = 1000) => ({ id, name: id, lengthMm, detectors: [`d${id}`] })

/**
 * B0, B1 ... Bn in a line, traffic from B0 towards Bn. Signal Sk stands at the exit of B(k-1) and protects
 * Bk (k = 1..n), so each signal's section is one block. B0 is the approach, with no signal protecting it.
 */
export function line(n: number, kind: Kind, exit: 'open' | 'buffer' = 'open'): Layout {
  const blocks = Array.from({ length: n + 1 }, (_, i) => block(`B${i}`))
  const links = Array.from({ length: n }, (_, i) => ({ from: `B${i}`, to: `B${i + 1}` }))
  const signals = Array.from({ length: n }, (_, i) => ({
    id: `S${i + 1}`,
    name: `Signal ${i + 1}`,
    kind,
    from: `B${i}`,
    protects: `B${i + 1}`,
    ...(i === n - 1 ? { endOfLine: exit === 'open' ? ('clear-ahead' as const) : ('danger-ahead' as const) } : {}),
  }))
  return valid({ schema: 1, name: 'line', scale: { name: 'OO', ratio: 76.2 }, blocks, links, signals } satisfies LayoutInput)
}

/** Indications of every signal in a state. */
export const ind = (layout: Layout, state: LayoutState) => computeIndications(layout, state)

export const LETTER: Record<Aspect, string> = { 'danger': 'R', 'caution': 'Y', 'preliminary-caution': 'YY', 'proceed': 'G' }

/** Aspects as R / Y / YY / G, in signal order, space separated. */
export function aspects(layout: Layout, state: LayoutState, ids?: string[]): string {
  const list = ids ?? layout.signals.map(s => s.id)
  const now = computeIndications(layout, state)
  return list.map(id => LETTER[now[id]!.aspect]).join(' ')
}

export function detectorOf(layout: Layout, blockId: string): string {
  const b = layout.blocks.find(x => x.id === blockId)
  if (!b) throw new Error(`no block ${blockId}`)
  return b.detectors[0]!
}

let clock = 1_700_000_000_000

/** Runs events through applyEvent and returns the final state and every change. */
export function run(layout: Layout, events: LayoutEvent[], state: LayoutState = initialState(layout)) {
  const changes: Change[] = []
  for (const e of events) {
    const r = applyEvent(layout, state, e)
    state = r.state
    changes.push(...r.changes)
  }
  return { state, changes }
}

export const occ = (layout: Layout, b: string, at = (clock += 1000)): LayoutEvent => ({
  type: 'detector',
  detector: detectorOf(layout, b),
  occupied: true,
  at,
})
export const clr = (layout: Layout, b: string, at = (clock += 1000)): LayoutEvent => ({
  type: 'detector',
  detector: detectorOf(layout, b),
  occupied: false,
  at,
})
export const set = (turnout: string, position: 'normal' | 'reverse' | 'unknown', at = (clock += 1000)): LayoutEvent => ({
  type: 'turnout',
  turnout,
  position,
  at,
})
export const mode = (signal: string, m: 'hold' | 'auto' | 'clear', at = (clock += 1000)): LayoutEvent => ({
  type: 'override',
  signal,
  mode: m,
  at,
})

/** State with the given blocks occupied (and nothing else changed). */
export function withOccupied(layout: Layout, blocks: string[], state: LayoutState = initialState(layout)): LayoutState {
  return run(layout, blocks.map(b => occ(layout, b)), state).state
}

export const alarmsOf = (changes: Change[]) => changes.filter(c => c.type === 'alarm').map(c => (c.type === 'alarm' ? c.alarm : null)!)
