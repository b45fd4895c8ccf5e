import { validateLayout, type Layout } from '#shared/signalling'

// The generated layout: 500 blocks in 20 rows of 25, one line winding back and forth across the drawing
// (each row's last block turns down into the next row), a four-aspect signal at the exit of every block,
// five areas of control of four rows each.

const ROWS = 20
const PER_ROW = 25
const STEP = 100
const ROW_GAP = 90
const MARGIN = 60

export function benchLayout(): Layout {
  const blocks: { id: string, name: string, lengthMm: number, detectors: string[] }[] = []
  const links: { from: string, to: string }[] = []
  const signals: { id: string, name: string, kind: 'four-aspect', from: string, protects: string, endOfLine?: 'danger-ahead' }[] = []
  const diagram = {
    width: MARGIN * 2 + PER_ROW * STEP + 40, height: MARGIN * 2 + (ROWS - 1) * ROW_GAP + 20,
    blocks: {} as Record<string, { path: [number, number][], label: [number, number] }>,
    signals: {} as Record<string, { at: [number, number], facing: 'left' | 'right' }>,
    turnouts: {},
    labels: [{ text: 'Bench line (500 blocks)', at: [MARGIN + (PER_ROW * STEP) / 2, MARGIN / 2] as [number, number], size: 'large' as const }],
  }
  const id = (n: number) => `B${String(n).padStart(3, '0')}`
  for (let row = 0; row < ROWS; row++) {
    const y = MARGIN + row * ROW_GAP
    const rightwards = row % 2 === 0
    for (let k = 0; k < PER_ROW; k++) {
      const n = row * PER_ROW + k
      const col = rightwards ? k : PER_ROW - 1 - k
      const x0 = MARGIN + (rightwards ? col : col + 1) * STEP
      const x1 = MARGIN + (rightwards ? col + 1 : col) * STEP
      const path: [number, number][] = [[x0, y], [x1, y]]
      const last = k === PER_ROW - 1 && row < ROWS - 1
      if (last) {
        const out = rightwards ? x1 + 30 : x1 - 30
        path.push([out, y + 30], [out, y + ROW_GAP - 30], [x1, y + ROW_GAP])
      }
      blocks.push({ id: id(n), name: `Bench ${n}`, lengthMm: 900 + ((n * 37) % 1500), detectors: [`D${id(n)}`] })
      diagram.blocks[id(n)] = { path, label: [(x0 + x1) / 2, y - 16] }
      if (n < ROWS * PER_ROW - 1) {
        links.push({ from: id(n), to: id(n + 1) })
        signals.push({ id: `S${id(n)}`, name: `Bench signal ${n}`, kind: 'four-aspect', from: id(n), protects: id(n + 1) })
        const sx = last ? (rightwards ? x1 + 30 : x1 - 30) : x1
        const sy = last ? y + ROW_GAP / 2 : y + 22
        diagram.signals[`S${id(n)}`] = { at: [sx + (last ? (rightwards ? 14 : -14) : 0), sy], facing: rightwards ? 'right' : 'left' }
      }
    }
  }
  const areas = Array.from({ length: 5 }, (_, i) => ({
    id: `area${i + 1}`, name: `Bench area ${i + 1}`, turnouts: [],
    signals: signals.filter((_, k) => Math.floor(k / (PER_ROW * 4)) === i).map(s => s.id),
  }))
  const r = validateLayout({ schema: 1, name: 'Bench line (500 blocks)', scale: { name: 'OO', ratio: 76.2 }, blocks, links, turnouts: [], signals, areas, diagram })
  if (!r.ok) throw new Error(`the generated layout is not valid: ${JSON.stringify(r.errors.slice(0, 3))}`)
  return r.layout
}
