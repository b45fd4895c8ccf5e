import type { Layout, LayoutSignal } from '../schemas/layout'
import { isStop, topologyOf, traceSection, type Topology, type Trace } from './topology'
import type { Aspect, Indication, LayoutState, OverrideMode, TurnoutPosition } from './types'

/**
 * Blockbell aspect rules:
 * - A stop signal shows danger when it is held, when any block of its section is occupied, or when the route
 *   through a turnout in its section is unknown or set against it.
 * - Otherwise, automatic working: two-aspect stop signals show proceed; three- and four-aspect signals show
 *   caution when the next stop signal is at danger; four-aspect signals show preliminary caution when the
 *   next shows caution; else proceed. With no next signal the signal reads its `endOfLine` setting
 *   ("danger-ahead", the default, as if the next showed danger; "clear-ahead" as if it showed proceed).
 * - A distant signal never shows danger: caution when its section is occupied (or its route not set, or it
 *   is held), or the stop signal ahead is at danger; else proceed. Distant signals do not end a section.
 * - `clear`: proceed whenever the own section is free and the route set, whatever is ahead.
 * - The junction indicator is lit, with its position, only with a proceed-type aspect.
 *
 * Danger depends only on the signal's own section, so a signal's aspect depends on at most the two stop
 * signals ahead of it; that bounds the work and makes the result independent of evaluation order.
 */

interface Local {
  trace: Trace
  occupied: boolean
}

export class IndicationReader {
  private readonly locals = new Map<string, Local>()
  private readonly pos: (id: string) => TurnoutPosition
  private readonly topo: Topology
  private readonly state: LayoutState

  constructor(topo: Topology, state: LayoutState) {
    this.topo = topo
    this.state = state
    this.pos = id => state.turnouts[id] ?? 'unknown'
  }

  private local(s: LayoutSignal): Local {
    let l = this.locals.get(s.id)
    if (!l) {
      const trace = traceSection(this.topo, s, this.pos)
      let occupied = false
      for (const b of trace.blocks) {
        if (this.state.occupied[b] === true) {
          occupied = true
          break
        }
      }
      l = { trace, occupied }
      this.locals.set(s.id, l)
    }
    return l
  }

  private mode(s: LayoutSignal): OverrideMode {
    return this.state.overrides[s.id] ?? 'auto'
  }

  /** Danger shown by a stop signal for reasons of its own (hold, section occupied, route not set). */
  private ownDanger(s: LayoutSignal): boolean {
    if (this.mode(s) === 'hold') return true
    const l = this.local(s)
    return l.occupied || !l.trace.routeSet
  }

  /** Whether `s` reads "next at danger" (including end of line read as danger ahead). */
  private nextDanger(s: LayoutSignal): boolean {
    const next = this.local(s).trace.next
    if (next) return this.ownDanger(next)
    return (s.endOfLine ?? 'danger-ahead') === 'danger-ahead'
  }

  /** Whether the next stop signal of `s` shows caution. */
  private nextCaution(s: LayoutSignal): boolean {
    const n = this.local(s).trace.next
    if (!n || this.ownDanger(n)) return false
    if (this.mode(n) === 'clear') return false
    if (n.kind !== 'three-aspect' && n.kind !== 'four-aspect') return false
    return this.nextDanger(n)
  }

  /** What automatic working would show. */
  lineAspect(s: LayoutSignal): Aspect {
    const l = this.local(s)
    if (s.kind === 'distant') {
      if (l.occupied || !l.trace.routeSet) return 'caution'
      const n = l.trace.next
      return (n ? this.ownDanger(n) : (s.endOfLine ?? 'danger-ahead') === 'danger-ahead') ? 'caution' : 'proceed'
    }
    if (l.occupied || !l.trace.routeSet) return 'danger'
    if (s.kind === 'two-aspect') return 'proceed'
    if (this.nextDanger(s)) return 'caution'
    if (s.kind === 'four-aspect' && this.nextCaution(s)) return 'preliminary-caution'
    return 'proceed'
  }

  indication(s: LayoutSignal): Indication {
    const override = this.mode(s)
    const l = this.local(s)
    const restrictive: Aspect = isStop(s) ? 'danger' : 'caution'
    let aspect: Aspect
    let exceedsLine = false
    if (override === 'hold') aspect = restrictive
    else if (override === 'clear') {
      if (l.occupied || !l.trace.routeSet) aspect = restrictive
      else {
        aspect = 'proceed'
        exceedsLine = this.lineAspect(s) !== 'proceed'
      }
    } else aspect = this.lineAspect(s)
    const indicator = aspect !== 'danger' && l.trace.routeSet ? l.trace.indicator : null
    return { aspect, indicator, override, exceedsLine }
  }
}

/** Indications of every signal of the layout, computed afresh from the state. */
export function computeIndications(layout: Layout, state: LayoutState): Record<string, Indication> {
  const topo = topologyOf(layout)
  const reader = new IndicationReader(topo, state)
  const res: Record<string, Indication> = {}
  for (const s of topo.signals) res[s.id] = reader.indication(s)
  return res
}

export const sameIndication = (a: Indication | undefined, b: Indication): boolean =>
  a !== undefined && a.aspect === b.aspect && a.indicator === b.indicator && a.override === b.override && a.exceedsLine === b.exceedsLine
