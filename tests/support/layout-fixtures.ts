import type { LayoutInput } from '#shared/schemas/layout'

/**
 * A small layout in the Fernhollow club's style: a straight line of `blocks` blocks run left to right
 * (B1 -> B2 -> ...), each with its detector, a three-aspect signal at the exit of each block but the last,
 * drawn along y = 200.
 */
export function lineLayout(name: string, blocks = 4): LayoutInput {
  const ids = Array.from({ length: blocks }, (_, i) => `B${i + 1}`)
  return {
    schema: 1,
    name,
    scale: { name: 'N', ratio: 148 },
    blocks: ids.map((id, i) => ({ id, name: `Hollin bank ${i + 1}`, lengthMm: 800 + i * 100, detectors: [`D${i + 1}`] })),
    links: ids.slice(1).map((id, i) => ({ from: ids[i]!, to: id })),
    turnouts: [],
    signals: ids.slice(1).map((id, i) => ({ id: `S${i + 2}`, name: `Hollin ${i + 2}`, kind: 'three-aspect' as const, from: ids[i]!, protects: id })),
    areas: [{ id: 'hollin', name: 'Hollin bank', signals: ids.slice(1).map((_, i) => `S${i + 2}`), turnouts: [] }],
    diagram: {
      width: 200 + blocks * 200,
      height: 400,
      blocks: Object.fromEntries(ids.map((id, i) => [id, { path: [[100 + i * 200, 200], [290 + i * 200, 200]], label: [195 + i * 200, 170] }])),
      signals: Object.fromEntries(ids.slice(1).map((_, i) => [`S${i + 2}`, { at: [290 + i * 200, 225], facing: 'right' as const }])),
      turnouts: {},
      labels: [{ text: name, at: [100 + blocks * 100, 60], size: 'large' as const }],
    },
  }
}
