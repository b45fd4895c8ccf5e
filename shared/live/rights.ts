import type { Layout, LayoutArea } from '../schemas/layout'
import { roleAtLeast, type Role } from '../utils/roles'
import type { AreaHolders, LiveUser } from './protocol'

/**
 * Who may work what on the panel. The server checks every command again; these rules only decide which
 * controls a panel shows and how it explains the ones it hides.
 * - Signals and turnouts are worked by the signaller (or admin) who holds their area of control.
 * - A block belongs to the first area (in the definition's order) with a signal reading into it or a turnout
 *   in it; interposing there needs that area. A block in no area (a fiddle yard, say) takes any area held.
 */

export interface PanelUser { id: number, name: string, role: Role }

/** `reason` says why not, in words for the person at the panel; null when allowed. */
export interface Verdict { allowed: boolean, area: LayoutArea | null, reason: string | null }

export function areaOfSignal(def: Layout, signal: string): LayoutArea | null {
  return def.areas.find(a => a.signals.includes(signal)) ?? null
}

export function areaOfTurnout(def: Layout, turnout: string): LayoutArea | null {
  return def.areas.find(a => a.turnouts.includes(turnout)) ?? null
}

export function areaOfBlock(def: Layout, block: string): LayoutArea | null {
  const signals = new Set(def.signals.filter(s => s.protects === block).map(s => s.id))
  const turnouts = new Set(def.turnouts.filter(t => t.block === block).map(t => t.id))
  return def.areas.find(a => a.signals.some(s => signals.has(s)) || a.turnouts.some(t => turnouts.has(t))) ?? null
}

export function holderOf(holders: AreaHolders, area: string): LiveUser | null {
  return holders[area] ?? null
}

export const VIEWER_REASON = 'You are signed in as a viewer: you can watch, not operate.'

/** Whether `user` can work the items of `area` (null: the item is in no area). */
export function verdictForArea(user: PanelUser | null, holders: AreaHolders, area: LayoutArea | null, what: string): Verdict {
  if (!user || !roleAtLeast(user.role, 'signaller')) return { allowed: false, area, reason: VIEWER_REASON }
  if (!area) return { allowed: false, area, reason: `This ${what} is in no area of control, so nobody works it from the panel.` }
  const holder = holderOf(holders, area.id)
  if (!holder) return { allowed: false, area, reason: `Nobody holds ${area.name}. Take the area to work this ${what}.` }
  if (holder.id !== user.id) return { allowed: false, area, reason: `${holder.name} holds ${area.name}; only the holder works this ${what}.` }
  return { allowed: true, area, reason: null }
}

export function signalVerdict(user: PanelUser | null, def: Layout, holders: AreaHolders, signal: string): Verdict {
  return verdictForArea(user, holders, areaOfSignal(def, signal), 'signal')
}

export function turnoutVerdict(user: PanelUser | null, def: Layout, holders: AreaHolders, turnout: string): Verdict {
  return verdictForArea(user, holders, areaOfTurnout(def, turnout), 'turnout')
}

export function interposeVerdict(user: PanelUser | null, def: Layout, holders: AreaHolders, block: string): Verdict {
  const area = areaOfBlock(def, block)
  if (area) return verdictForArea(user, holders, area, 'berth')
  if (!user || !roleAtLeast(user.role, 'signaller')) return { allowed: false, area: null, reason: VIEWER_REASON }
  const holdsAny = Object.values(holders).some(h => h?.id === user.id)
  return holdsAny ? { allowed: true, area: null, reason: null } : { allowed: false, area: null, reason: 'This block is in no area of control: take any area to interpose here.' }
}

/** What the area bar offers `user` for one area. */
export interface AreaActions { take: boolean, release: boolean, handOver: boolean, forceRelease: boolean, note: string | null }

export function areaActions(user: PanelUser | null, holders: AreaHolders, area: LayoutArea): AreaActions {
  const none: AreaActions = { take: false, release: false, handOver: false, forceRelease: false, note: null }
  const holder = holderOf(holders, area.id)
  if (!user || !roleAtLeast(user.role, 'signaller')) return { ...none, note: 'Viewers watch only.' }
  if (!holder) return { ...none, take: true }
  if (holder.id === user.id) return { ...none, release: true, handOver: true }
  const admin = roleAtLeast(user.role, 'admin')
  return { ...none, forceRelease: admin, note: admin ? null : `Held by ${holder.name}: ask them to release or hand it over.` }
}

/** Connected people who could take an area over from `user`: other signallers and admins. */
export function handOverCandidates(user: PanelUser | null, operators: LiveUser[]): LiveUser[] {
  const seen = new Set<number>()
  return operators.filter((o) => {
    if (o.id === user?.id || seen.has(o.id) || !roleAtLeast(o.role, 'signaller')) return false
    seen.add(o.id)
    return true
  })
}
