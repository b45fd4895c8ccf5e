import type { AreaHolders } from './protocol'

export interface AreaCommand { at: number, area: string, action: string, userId: number | null, to?: number | null }
export interface AreaInterval { area: string, userId: number, from: number, to: number }

/**
 * Who held which area when, from the holders at the start and the area commands that were carried out
 * (only those are journaled), up to `end`.
 */
export function areaIntervals(startHolders: AreaHolders, start: number, commands: AreaCommand[], end: number): AreaInterval[] {
  const open = new Map<string, { userId: number, from: number }>()
  for (const [area, holder] of Object.entries(startHolders)) if (holder) open.set(area, { userId: holder.id, from: start })
  const out: AreaInterval[] = []
  const close = (area: string, at: number) => {
    const o = open.get(area)
    if (o) out.push({ area, userId: o.userId, from: o.from, to: at })
    open.delete(area)
  }
  for (const c of commands) {
    const next = c.action === 'take-area' ? c.userId : c.action === 'hand-over' ? c.to ?? null : null
    if (c.action === 'take-area' || c.action === 'hand-over' || c.action === 'release-area' || c.action === 'force-release') close(c.area, c.at)
    if (next !== null) open.set(c.area, { userId: next, from: c.at })
  }
  for (const area of [...open.keys()]) close(area, end)
  return out.sort((a, b) => a.from - b.from || a.area.localeCompare(b.area))
}
