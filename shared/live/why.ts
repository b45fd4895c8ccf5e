import type { Layout } from '../schemas/layout'
import { topologyOf, traceSection } from '../signalling/topology'
import type { LiveState } from './protocol'

/**
 * Why a signal shows danger, in words for its sheet, or null when it does not (or for no reason the panel
 * can name). Set to Clear, a signal still shows danger while its own section is occupied or its route is
 * not set (DESIGN.md, overrides): "Clear, but its section UM3 is occupied" reads as the rule working, not as
 * a command that failed.
 */
export function dangerReason(def: Layout, state: LiveState, signal: string): string | null {
  const s = def.signals.find(x => x.id === signal)
  const indication = state.indications[signal]
  if (!s || !indication || indication.aspect !== 'danger') return null
  if (indication.override === 'hold') return 'Held at danger by hand.'
  const lead = indication.override === 'clear' ? 'Clear, but' : 'Danger:'
  const trace = traceSection(topologyOf(def), s, id => state.turnouts[id] ?? 'unknown')
  const occupied = trace.blocks.filter(b => state.occupied[b] === true)
  const name = (id: string) => def.blocks.find(b => b.id === id)?.name ?? id
  if (occupied.length === 1) return `${lead} its section ${occupied[0]} (${name(occupied[0]!)}) is occupied.`
  if (occupied.length > 1) return `${lead} blocks ${occupied.join(', ')} of its section are occupied.`
  if (!trace.routeSet) {
    const turnout = def.turnouts.find(t => trace.blocks.includes(t.block) && (state.turnouts[t.id] ?? 'unknown') === 'unknown')
    return turnout ? `${lead} the position of turnout ${turnout.id} in its section is not known.` : `${lead} the route through its section is not set.`
  }
  return null
}
