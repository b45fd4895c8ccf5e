import type { DiagramFacingName, Layout, Point } from '../schemas/layout'
import type { Aspect, OverrideMode, TurnoutPosition } from '../signalling/types'
import { areaOfBlock } from './rights'

/**
 * Drawing helpers for the Panel's mimic diagram. Aspects always carry a shape as well as a colour:
 * danger a bar across the lamp, caution one dot, preliminary caution two dots, proceed an arrow in the
 * direction of travel.
 */

export type AspectCue = 'bar' | 'dot' | 'two-dots' | 'arrow'

export const ASPECT_CUE: Record<Aspect, AspectCue> = {
  danger: 'bar',
  caution: 'dot',
  'preliminary-caution': 'two-dots',
  proceed: 'arrow',
}

export const ASPECT_LABEL: Record<Aspect, string> = {
  danger: 'Danger',
  caution: 'Caution',
  'preliminary-caution': 'Preliminary caution',
  proceed: 'Proceed',
}

export const OVERRIDE_LABEL: Record<OverrideMode, string> = { hold: 'Hold', auto: 'Auto', clear: 'Clear' }

export const OVERRIDE_HINT: Record<OverrideMode, string> = {
  hold: 'Keep it at danger, whatever the line shows.',
  auto: 'Let the block occupancy drive it.',
  clear: 'Show proceed whenever its own section is free, whatever is ahead.',
}

export const TURNOUT_LABEL: Record<TurnoutPosition, string> = { normal: 'Normal', reverse: 'Reverse', unknown: 'Position not known' }

/** SVG polyline `points` attribute. */
export function pointsAttr(path: Point[]): string {
  return path.map(([x, y]) => `${x},${y}`).join(' ')
}

/** Unit vector of the direction of travel. */
export function facingVector(facing: DiagramFacingName): Point {
  return ({ left: [-1, 0], right: [1, 0], up: [0, -1], down: [0, 1] } as const)[facing] as Point
}

/** Rotation in degrees of a shape drawn pointing right, so that it points along `facing`. */
export function facingAngle(facing: DiagramFacingName): number {
  return { right: 0, down: 90, left: 180, up: 270 }[facing]
}

/**
 * Short strokes from a turnout's point along each of its legs, to show which way it is set: the direction
 * is towards the nearest point of the leg block's drawing other than the turnout point itself.
 */
export function turnoutLegs(def: Layout, turnoutId: string, length = 34): { normal: [Point, Point], reverse: [Point, Point] } | null {
  const t = def.turnouts.find(x => x.id === turnoutId)
  const at = def.diagram.turnouts[turnoutId]?.at
  if (!t || !at) return null
  const leg = (block: string): [Point, Point] => {
    const path = def.diagram.blocks[block]?.path ?? []
    let best: Point | null = null
    let bestD = Infinity
    for (const p of path) {
      const d = Math.hypot(p[0] - at[0], p[1] - at[1])
      if (d > 1 && d < bestD) {
        best = p
        bestD = d
      }
    }
    if (!best) return [at, at]
    const k = Math.min(length, bestD) / bestD
    return [at, [at[0] + (best[0] - at[0]) * k, at[1] + (best[1] - at[1]) * k]]
  }
  return { normal: leg(t.normal), reverse: leg(t.reverse) }
}

/** Index (in `def.areas`) of the area each block is drawn under; blocks in no area are left out. */
export function blockAreaIndex(def: Layout): Record<string, number> {
  const out: Record<string, number> = {}
  for (const b of def.blocks) {
    const area = areaOfBlock(def, b.id)
    if (area) out[b.id] = def.areas.indexOf(area)
  }
  return out
}

/** Dash patterns that tell the area bands apart without colour (solid, long dashes, short dashes, ...). */
export const AREA_DASHES = ['', '18 8', '6 6', '2 6']

export function nameOf(list: { id: string, name: string }[] | undefined, id: string): string {
  return list?.find(x => x.id === id)?.name ?? id
}

export interface Bounds { x: number, y: number, width: number, height: number }

/**
 * The part of the drawing that holds something (tracks, signals, turnouts, labels), with a margin, inside
 * the drawing area: fitting this rather than the whole drawing area makes the most of the screen.
 */
export function contentBounds(def: Layout, margin = 40): Bounds {
  const d = def.diagram
  const points: Point[] = [
    ...Object.values(d.blocks).flatMap(b => b.path),
    ...Object.values(d.signals).map(s => s.at),
    ...Object.values(d.turnouts).map(t => t.at),
    ...d.labels.map(l => l.at),
  ]
  if (points.length === 0) return { x: 0, y: 0, width: d.width, height: d.height }
  const xs = points.map(p => p[0])
  const ys = points.map(p => p[1])
  const x = Math.max(0, Math.min(...xs) - margin)
  const y = Math.max(0, Math.min(...ys) - margin)
  const right = Math.min(d.width, Math.max(...xs) + margin)
  const bottom = Math.min(d.height, Math.max(...ys) + margin)
  return { x, y, width: Math.max(1, right - x), height: Math.max(1, bottom - y) }
}
