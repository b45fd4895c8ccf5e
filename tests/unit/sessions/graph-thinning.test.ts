import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { clipLine, fitGraph, thinLine } from '#shared/live/session-graph'

// M4 aggregation: U. Jugel, Z. Jerzak, G. Hackenbroich, V. Markl, "M4: A Visualization-Oriented Time Series Data
// Aggregation", PVLDB 7(10), 2014, §4: a line drawn w pixels wide shows the same pixels when each pixel column
// keeps only its first, last, lowest and highest point (the four figures of that column). The checks below test
// those four per column, on random lines, against the untouched line.
type Point = [number, number]
const FROM = 0
const TO = 100_000

const line = fc.array(fc.oneof(
  { weight: 12, arbitrary: fc.tuple(fc.integer({ min: 1, max: 900 }), fc.integer({ min: 0, max: 9000 })) },
  { weight: 1, arbitrary: fc.constant(null) },
), { maxLength: 400 }).map((steps) => {
  let t = FROM
  return steps.map((s) => {
    if (!s) return null
    t += s[0]
    return [t, s[1]] as Point
  })
})

function columnFigures(points: (Point | null)[], columns: number) {
  const figures = new Map<string, { first: number, last: number, low: number, high: number }>()
  let segment = 0
  for (const p of points) {
    if (!p) { segment++; continue }
    const key = `${segment}:${Math.floor((p[0] - FROM) / (TO - FROM) * columns)}`
    const f = figures.get(key)
    if (!f) figures.set(key, { first: p[1], last: p[1], low: p[1], high: p[1] })
    else Object.assign(f, { last: p[1], low: Math.min(f.low, p[1]), high: Math.max(f.high, p[1]) })
  }
  return figures
}

const stretches = (points: (Point | null)[]) => points.reduce<Point[][]>((all, p, i) => {
  if (p && (i === 0 || !points[i - 1])) all.push([p])
  else if (p) all[all.length - 1]!.push(p)
  return all
}, [])
const longStretches = (points: (Point | null)[]) => stretches(points).filter(s => s.length > 1).flat()
/** Where the dots of points standing alone fall: pixel column and distance. */
const dots = (points: (Point | null)[], columns: number) =>
  new Set(stretches(points).filter(s => s.length === 1).map(([p]) => `${Math.floor((p![0] - FROM) / (TO - FROM) * columns)}:${p![1]}`))

describe('thinning the time-distance graph to its width (M4)', () => {
  it('keeps each pixel column\'s first, last, lowest and highest point of every stretch, each dot, and only original points', () => {
    fc.assert(fc.property(line, fc.integer({ min: 10, max: 300 }), (points, columns) => {
      const thinned = thinLine(points, FROM, TO, columns)
      const originals = new Set(points.filter(Boolean).map(p => p!.join(',')))
      expect(thinned.every(p => p === null || originals.has(p.join(',')))).toBe(true)
      expect(stretches(thinned).filter(s => s.length > 1)).toHaveLength(stretches(points).filter(s => s.length > 1).length)
      const withBreaks = (ps: (Point | null)[]) => stretches(ps).filter(s => s.length > 1).flatMap(s => [...s, null])
      expect(columnFigures(withBreaks(thinned), columns)).toEqual(columnFigures(withBreaks(points), columns))
      expect(dots(thinned, columns)).toEqual(dots(points, columns))
      expect(longStretches(thinned).length).toBeLessThanOrEqual(longStretches(points).length)
    }))
  })

  it('thins a night-long unbroken line of 300,000 points to four a column at most', () => {
    const long: Point[] = Array.from({ length: 300_000 }, (_, i) => [i / 3, (i * 7919) % 9000])
    const thinned = thinLine(clipLine(long, FROM, TO), FROM, TO, 1200)
    expect(thinned.length).toBeLessThanOrEqual(4 * 1200)
    expect(thinned[0]).toEqual(long[0])
    expect(thinned[thinned.length - 1]).toEqual(long[long.length - 1])
  })

  it('leaves a line alone when no column holds more than its four points', () => {
    const points: (Point | null)[] = [[0, 0], [20_000, 2200], null, [50_000, 3700], [90_000, 5500]]
    expect(thinLine(points, FROM, TO, 100)).toEqual(points)
  })

  it('clips a line to the window but keeps the points either side, so it still reaches both edges', () => {
    const points: (Point | null)[] = [[0, 0], [10, 100], [20, 200], [30, 300], null, [40, 0], [50, 100]]
    expect(clipLine(points, 15, 25)).toEqual([[10, 100], [20, 200], [30, 300]])
    // the first stretch ends before the window: nothing of it is drawn there
    expect(clipLine(points, 35, 45)).toEqual([[40, 0], [50, 100]])
  })

  it('says how many points it left out, and nothing when it left none out', () => {
    const dense: Point[] = Array.from({ length: 1000 }, (_, i) => [i * 100, (i * 37) % 5000])
    const graph = { route: [], trains: [{ description: '1F23', points: dense }], dangerPasses: [], from: FROM, to: TO }
    expect(fitGraph(graph, FROM, TO, 100).thinning).toEqual({ columns: 100, points: 1000, shown: expect.any(Number) })
    expect(fitGraph(graph, FROM, TO, 100).thinning!.shown).toBeLessThanOrEqual(400)
    expect(fitGraph(graph, FROM, 5_000, 100).thinning).toBeNull()
  })
})
