import type { GraphData } from '../types/sessions'

export interface GraphBlock { id: string, name: string, lengthMm: number }
export interface GraphDescriptionEvent { at: number, block: string, description: string | null, reason: string }
export interface GraphAlarm { at: number, block: string, signal: string, description: string | null }

/**
 * The time-distance graph of a route: blocks in route order, each starting where the one before ends (by
 * length). A described train gets a point each time its description enters a block of the route (the
 * front of the train at the block's start); a break (null) where it leaves the route or skips along it.
 * When its description clears from the last block it held on the route, the line ends at that block's end.
 */
export function buildTimeDistance(route: GraphBlock[], events: GraphDescriptionEvent[], alarms: GraphAlarm[], from: number, to: number): GraphData {
  const index = new Map<string, number>()
  const start: number[] = []
  let mm = 0
  route.forEach((b, i) => {
    index.set(b.id, i)
    start.push(mm)
    mm += b.lengthMm
  })
  const trains = new Map<string, { points: ([number, number] | null)[], lastIndex: number | null }>()
  const holder = new Map<string, string>()
  const line = (d: string) => {
    let t = trains.get(d)
    if (!t) { t = { points: [], lastIndex: null }; trains.set(d, t) }
    return t
  }
  for (const e of events) {
    const i = index.get(e.block)
    if (i === undefined) continue
    if (e.description) {
      holder.set(e.block, e.description)
      const t = line(e.description)
      if (t.lastIndex !== null && t.lastIndex !== i - 1 && t.points.length) t.points.push(null)
      t.points.push([e.at, start[i]!])
      t.lastIndex = i
    } else {
      const d = holder.get(e.block)
      holder.delete(e.block)
      const t = d ? trains.get(d) : undefined
      if (t && t.lastIndex === i) {
        t.points.push([e.at, start[i]! + route[i]!.lengthMm], null)
        t.lastIndex = null
      }
    }
  }
  return {
    route: route.map((b, i) => ({ id: b.id, name: b.name, startMm: start[i]!, lengthMm: b.lengthMm })),
    trains: [...trains].map(([description, t]) => ({ description, points: trimBreaks(t.points) }))
      .sort((a, b) => a.description.localeCompare(b.description)),
    dangerPasses: alarms.filter(a => index.has(a.block)).map(a => ({ at: a.at, mm: start[index.get(a.block)!]!, signal: a.signal, description: a.description })),
    from,
    to,
  }
}

function trimBreaks(points: ([number, number] | null)[]): ([number, number] | null)[] {
  while (points.length && points[points.length - 1] === null) points.pop()
  return points
}
