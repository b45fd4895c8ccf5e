import type { Layout } from '#shared/schemas/layout'
import type { AreaHolders, LiveUser } from '#shared/live/protocol'
import { roleAtLeast } from '#shared/utils/roles'

/** Which area of control each signal, turnout and block belongs to (a block: through its signals and turnouts). */
export interface AreaIndex {
  signal: Map<string, string>
  turnout: Map<string, string>
  block: Map<string, string>
}

export function indexAreas(layout: Layout): AreaIndex {
  const index: AreaIndex = { signal: new Map(), turnout: new Map(), block: new Map() }
  const signals = new Map(layout.signals.map(s => [s.id, s]))
  const turnouts = new Map(layout.turnouts.map(t => [t.id, t]))
  for (const area of layout.areas) {
    for (const id of area.signals) {
      index.signal.set(id, area.id)
      const s = signals.get(id)
      if (s && !index.block.has(s.protects)) index.block.set(s.protects, area.id)
    }
    for (const id of area.turnouts) {
      index.turnout.set(id, area.id)
      const t = turnouts.get(id)
      if (t && !index.block.has(t.block)) index.block.set(t.block, area.id)
    }
  }
  return index
}

export type Verdict = { ok: true } | { ok: false, reason: string }
const refuse = (reason: string): Verdict => ({ ok: false, reason })
const OK: Verdict = { ok: true }

/** May `user` operate the item in area `areaId`? Signallers (and admins) who hold that area may. */
export function mayOperate(user: LiveUser, areaId: string | undefined, holders: AreaHolders, areaName: (id: string) => string, what: string): Verdict {
  if (!roleAtLeast(user.role, 'signaller')) return refuse(`Viewers cannot ${what}.`)
  if (!areaId) return refuse(`It is in no area of control, so nobody can ${what}.`)
  const holder = holders[areaId]
  if (!holder) return refuse(`Take the area "${areaName(areaId)}" first.`)
  if (holder.id !== user.id) return refuse(`"${areaName(areaId)}" is held by ${holder.name}.`)
  return OK
}

/** May `user` interpose in `block`? In a block of an area: its holder. In a block of no area: any signaller holding an area. */
export function mayInterpose(user: LiveUser, block: string, index: AreaIndex, holders: AreaHolders, areaName: (id: string) => string): Verdict {
  const areaId = index.block.get(block)
  if (areaId) return mayOperate(user, areaId, holders, areaName, 'write a train description there')
  if (!roleAtLeast(user.role, 'signaller')) return refuse('Viewers cannot write train descriptions.')
  const holdsAny = Object.values(holders).some(h => h?.id === user.id)
  return holdsAny ? OK : refuse('Take an area of control first.')
}
