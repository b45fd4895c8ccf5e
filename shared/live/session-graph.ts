import type { GraphData } from '../types/sessions'

export interface GraphBlock { id: string, name: string, lengthMm: number }
export interface GraphDescriptionEvent { at: number, block: string, description: string | null, reason: string }
export interface GraphAlarm { at: number, block: string, signal: string, description: string | null }

/** A train's move: its description entering a block, or leaving the block it held (the block's clear). */
export type TrainMove = [at: number, block: string, enters: 0 | 1]

/**
 * Each description's moves in journal order. A clear belongs to the description that held the block; a clear of
 * a block nobody held is nobody's. Which block held what depends on that block's entries alone, so the moves of
 * a whole session serve every route.
 */
export function trainMovesOf(events: GraphDescriptionEvent[]): Map<string, TrainMove[]> {
  const trains = new Map<string, TrainMove[]>()
  const holder = new Map<string, string>()
  for (const e of events) {
    if (e.description) {
      holder.set(e.block, e.description)
      let moves = trains.get(e.description)
      if (!moves) trains.set(e.description, moves = [])
      moves.push([e.at, e.block, 1])
    } else {
      const d = holder.get(e.block)
      holder.delete(e.block)
      if (d) trains.get(d)!.push([e.at, e.block, 0])
    }
  }
  return trains
}

/**
 * The time-distance graph of a route: blocks in route order, each starting where the one before ends (by
 * length). A described train gets a point each time its description enters a block of the route (the
 * front of the train at the block's start); a break (null) where it leaves the route or skips along it.
 * When its description clears from the last block it held on the route, the line ends at that block's end.
 */
export function timeDistanceOf(route: GraphBlock[], trains: Iterable<[string, TrainMove[]]>, alarms: GraphAlarm[], from: number, to: number): GraphData {
  const index = new Map<string, number>()
  const start: number[] = []
  let mm = 0
  route.forEach((b, i) => {
    index.set(b.id, i)
    start.push(mm)
    mm += b.lengthMm
  })
  const lines: GraphData['trains'] = []
  for (const [description, moves] of trains) {
    const points: ([number, number] | null)[] = []
    let lastIndex: number | null = null
    let entered = false
    for (const [at, block, enters] of moves) {
      const i = index.get(block)
      if (i === undefined) continue
      if (enters) {
        entered = true
        if (lastIndex !== null && lastIndex !== i - 1 && points.length) points.push(null)
        points.push([at, start[i]!])
        lastIndex = i
      } else if (lastIndex === i) {
        points.push([at, start[i]! + route[i]!.lengthMm], null)
        lastIndex = null
      }
    }
    if (entered) lines.push({ description, points: trimBreaks(points) })
  }
  return {
    route: route.map((b, i) => ({ id: b.id, name: b.name, startMm: start[i]!, lengthMm: b.lengthMm })),
    trains: lines.sort((a, b) => a.description.localeCompare(b.description)),
    dangerPasses: alarms.filter(a => index.has(a.block)).map(a => ({ at: a.at, mm: start[index.get(a.block)!]!, signal: a.signal, description: a.description })),
    from,
    to,
  }
}

/** The time-distance graph of a route from the description entries themselves (see timeDistanceOf). */
export function buildTimeDistance(route: GraphBlock[], events: GraphDescriptionEvent[], alarms: GraphAlarm[], from: number, to: number): GraphData {
  return timeDistanceOf(route, trainMovesOf(events), alarms, from, to)
}

function trimBreaks(points: ([number, number] | null)[]): ([number, number] | null)[] {
  while (points.length && points[points.length - 1] === null) points.pop()
  return points
}

type Point = [number, number]

/**
 * The part of a line inside [from, to], with the last point before and the first point after it kept so the
 * line still runs to the window's edges. Breaks (null) stay where they were.
 */
export function clipLine(points: (Point | null)[], from: number, to: number): (Point | null)[] {
  const out: (Point | null)[] = []
  let pendingBreak = false
  points.forEach((p, i) => {
    if (!p) {
      pendingBreak = out.length > 0
      return
    }
    const next = points[i + 1]
    const previous = points[i - 1]
    const inside = p[0] >= from && p[0] <= to
    const leadsIn = p[0] < from && !!next && next[0] >= from
    const leadsOut = p[0] > to && !!previous && previous[0] <= to
    if (!inside && !leadsIn && !leadsOut) return
    if (pendingBreak) out.push(null)
    pendingBreak = false
    out.push(p)
  })
  return out
}

/**
 * Thins a line to what `columns` pixel columns across [from, to] can show, by M4 aggregation (U. Jugel et al.,
 * "M4: A Visualization-Oriented Time Series Data Aggregation", PVLDB 7(10), 2014): in each column it keeps the
 * first and the last point and those of least and greatest distance, and a line through those draws the same
 * pixels as one through every point. Every point kept is one of the originals; each stretch between breaks is
 * thinned on its own, so the breaks stay; of points standing alone (drawn as dots) at the same distance in one
 * column, the first is kept.
 */
export function thinLine(points: (Point | null)[], from: number, to: number, columns: number): (Point | null)[] {
  const scale = columns / Math.max(1, to - from)
  const column = (t: number) => Math.floor((t - from) * scale)
  const out: (Point | null)[] = []
  const dots = new Map<number, Set<number>>()
  let i = 0
  while (i < points.length) {
    if (!points[i]) { i++; continue }
    let stop = i
    while (stop + 1 < points.length && points[stop + 1]) stop++
    // points[i..stop] is one stretch between breaks
    if (stop === i) {
      // a point standing alone is a dot: one dot per column and distance is what shows
      const [t, mm] = points[i]!
      const seen = dots.get(column(t)) ?? new Set<number>()
      dots.set(column(t), seen)
      if (!seen.has(mm)) {
        seen.add(mm)
        if (out.length) out.push(null)
        out.push(points[i]!)
      }
      i = stop + 1
      continue
    }
    if (out.length) out.push(null)
    let first = i
    while (first <= stop) {
      const c = column(points[first]![0])
      let last = first
      let low = first
      let high = first
      while (last < stop && column(points[last + 1]![0]) === c) {
        last++
        if (points[last]![1] < points[low]![1]) low = last
        if (points[last]![1] > points[high]![1]) high = last
      }
      for (const k of [first, low, high, last].sort((x, y) => x - y).filter((k, n, all) => n === 0 || k !== all[n - 1])) out.push(points[k]!)
      first = last + 1
    }
    i = stop + 1
  }
  return out
}

/** The graph as drawn `columns` pixels wide over [from, to]: lines clipped to the window and thinned (M4). */
export function fitGraph(graph: GraphData, from: number, to: number, columns: number): GraphData {
  let total = 0
  let shown = 0
  const trains = graph.trains.map((t) => {
    const clipped = clipLine(t.points, from, to)
    const thinned = thinLine(clipped, from, to, columns)
    total += clipped.filter(Boolean).length
    shown += thinned.filter(Boolean).length
    return { description: t.description, points: thinned }
  }).filter(t => t.points.length)
  return {
    ...graph, trains, from, to,
    dangerPasses: graph.dangerPasses.filter(d => d.at >= from && d.at <= to),
    thinning: shown < total ? { columns, points: total, shown } : null,
  }
}
