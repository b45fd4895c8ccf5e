import type { LayoutInput } from '#shared/schemas/layout'

/**
 * A new layout: one block drawn as a short straight line, so that it validates and runs from the start
 * (a layout has at least one block). Scale OO (1:76.2) until the owner sets their own.
 */
export function blankLayout(name: string): LayoutInput {
  return {
    schema: 1,
    name,
    scale: { name: 'OO', ratio: 76.2 },
    blocks: [{ id: 'B1', name: 'Block 1', lengthMm: 900, detectors: ['D1'] }],
    links: [],
    turnouts: [],
    signals: [],
    areas: [],
    diagram: { width: 1280, height: 800, blocks: { B1: { path: [[160, 400], [400, 400]], label: [280, 370] } }, signals: {}, turnouts: {}, labels: [] },
  }
}

/** A slug for a layout name: lower-case letters, digits and dashes, at most 48 characters. */
export function slugFor(name: string): string {
  const slug = name.normalize('NFKD').replace(/[\u0300-\u036F]/g, '').toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 48).replace(/-+$/, '')
  return slug || 'layout'
}
