import type { Layout, LayoutArea } from '../schemas/layout'
import { roleAtLeast, type Role } from '../utils/roles'
import type { AreaHolders, LiveUser, UnattendedAreas } from './protocol'

/**
 * Who may work what, in one place: the server refuses a command with these reasons, and a panel uses the
 * same rules to decide which controls it shows and how it explains the ones it hides.
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

function areaOfTurnout(def: Layout, turnout: string): LayoutArea | null {
  return def.areas.find(a => a.turnouts.includes(turnout)) ?? null
}

export function areaOfBlock(def: Layout, block: string): LayoutArea | null {
  const signals = new Set(def.signals.filter(s => s.protects === block).map(s => s.id))
  const turnouts = new Set(def.turnouts.filter(t => t.block === block).map(t => t.id))
  return def.areas.find(a => a.signals.some(s => signals.has(s)) || a.turnouts.some(t => turnouts.has(t))) ?? null
}

function holderOf(holders: AreaHolders, area: string): LiveUser | null {
  return holders[area] ?? null
}

const VIEWER_REASON = 'You are signed in as a viewer: you can watch, not operate.'

/** Whether `user` can work the items of `area` (null: the item is in no area). */
function verdictForArea(user: PanelUser | null, holders: AreaHolders, area: LayoutArea | null, what: string): Verdict {
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

export type AreaAction = 'take' | 'release' | 'hand-over' | 'force-release'

/**
 * Whether `user` may take, release, hand over or force-release `area` as the holders stand now. An area in
 * `unattended` (its holder has had no panel open for the grace period) may be taken by any signaller.
 */
export function areaVerdict(user: PanelUser | null, holders: AreaHolders, area: LayoutArea, action: AreaAction, unattended: UnattendedAreas = {}): Verdict {
  const no = (reason: string): Verdict => ({ allowed: false, area, reason })
  if (!user || !roleAtLeast(user.role, 'signaller')) return no(VIEWER_REASON)
  const holder = holderOf(holders, area.id)
  switch (action) {
    case 'take':
      if (holder?.id === user.id) return no(`You already hold ${area.name}.`)
      if (holder && !(area.id in unattended)) return no(`${area.name} is held by ${holder.name}; ask them to release or hand it over.`)
      break
    case 'release':
    case 'hand-over':
      if (!holder) return no(`Nobody holds ${area.name}.`)
      if (holder.id !== user.id) return no(`${holder.name} holds ${area.name}; only the holder can release or hand it over.`)
      break
    case 'force-release':
      if (!roleAtLeast(user.role, 'admin')) return no('Only an admin can force-release an area.')
      if (!holder) return no(`Nobody holds ${area.name}.`)
      break
  }
  return { allowed: true, area, reason: null }
}

/** Whether `to` can receive `area` from its holder (checked after `areaVerdict(..., 'hand-over')`). */
export function handOverTargetVerdict(user: PanelUser, area: LayoutArea, to: LiveUser | null): Verdict {
  if (!to) return { allowed: false, area, reason: 'That person is not connected to this layout.' }
  if (to.id === user.id) return { allowed: false, area, reason: 'You already hold it.' }
  if (!roleAtLeast(to.role, 'signaller')) return { allowed: false, area, reason: `${to.name} is a viewer and cannot hold an area.` }
  return { allowed: true, area, reason: null }
}

/** Only an admin may force a throw of a locked turnout (in any area, held or not, as with force-release). */
export function forceTurnoutVerdict(user: PanelUser | null, def: Layout, turnout: string): Verdict {
  const area = areaOfTurnout(def, turnout)
  if (!user || !roleAtLeast(user.role, 'signaller')) return { allowed: false, area, reason: VIEWER_REASON }
  if (!roleAtLeast(user.role, 'admin')) return { allowed: false, area, reason: 'Only an admin can force a throw of a locked turnout.' }
  return { allowed: true, area, reason: null }
}

export function acknowledgeVerdict(user: PanelUser | null): Verdict {
  return user && roleAtLeast(user.role, 'signaller') ? { allowed: true, area: null, reason: null } : { allowed: false, area: null, reason: VIEWER_REASON }
}

/** What the area bar offers `user` for one area; `takeOver`: Take would take it from an absent holder. */
export interface AreaActions { take: boolean, takeOver: boolean, release: boolean, handOver: boolean, forceRelease: boolean, note: string | null }

export function areaActions(user: PanelUser | null, holders: AreaHolders, area: LayoutArea, unattended: UnattendedAreas = {}): AreaActions {
  const may = (action: AreaAction) => areaVerdict(user, holders, area, action, unattended).allowed
  const holder = holderOf(holders, area.id)
  const mine = !!user && holder?.id === user.id
  const take = may('take')
  const actions: AreaActions = { take, takeOver: take && !!holder, release: may('release'), handOver: may('hand-over'), forceRelease: may('force-release') && !mine, note: null }
  if (!user || !roleAtLeast(user.role, 'signaller')) actions.note = 'Viewers watch only.'
  else if (holder && !mine && actions.takeOver) actions.note = `Unattended: ${holder.name} has had no panel open for a while. You may take it.`
  else if (holder && !mine && !actions.forceRelease) actions.note = `Held by ${holder.name}: ask them to release or hand it over.`
  return actions
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
