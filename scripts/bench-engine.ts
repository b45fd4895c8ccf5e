// Signalling engine benchmark: npm run bench:engine
// Generates layouts of 500, 5,000 and 50,000 blocks (two main-line loops worked one way each, with passing
// loops), runs trains round them, and prints events/s and time per event for applyEvent, for
// createEngine().apply, and the time of a full computeIndications.
import { performance } from 'node:perf_hooks'
import { applyEvent, computeIndications, createEngine, validateLayout } from '#shared/signalling'
import type { Layout, LayoutEvent, LayoutState } from '#shared/signalling'

const PASSING_LOOP_EVERY = 50

function generate(total: number): Layout {
  const loops = Math.floor(total / (2 * PASSING_LOOP_EVERY + 3))
  const perLine = Math.floor((total - 3 * loops) / 2)
  const blocks: { id: string, name: string, lengthMm: number, detectors: string[] }[] = []
  const links: { from: string, to: string }[] = []
  const turnouts: { id: string, block: string, normal: string, reverse: string }[] = []
  const signals: Record<string, unknown>[] = []
  const add = (id: string) => blocks.push({ id, name: id, lengthMm: 900 + ((blocks.length * 37) % 1500), detectors: [`d${id}`] })
  for (const line of ['U', 'D']) {
    for (let i = 0; i < perLine; i++) add(`${line}${i}`)
    for (let i = 0; i < perLine; i++) {
      const from = `${line}${i}`
      const to = `${line}${(i + 1) % perLine}`
      links.push({ from, to })
      signals.push({ id: `S${from}`, name: `S${from}`, kind: 'four-aspect', from, protects: to })
    }
  }
  // passing loops on the up line: facing turnout in U(a), three loop blocks, trailing turnout in U(a + 4)
  for (let k = 0; k < loops; k++) {
    const a = k * PASSING_LOOP_EVERY + 10
    const b = a + 4
    const ids = [`P${k}a`, `P${k}b`, `P${k}c`]
    ids.forEach(add)
    links.push({ from: `U${a}`, to: ids[0]! }, { from: ids[0]!, to: ids[1]! }, { from: ids[1]!, to: ids[2]! }, { from: ids[2]!, to: `U${b}` })
    turnouts.push({ id: `TF${k}`, block: `U${a}`, normal: `U${a + 1}`, reverse: ids[0]! })
    turnouts.push({ id: `TT${k}`, block: `U${b}`, normal: `U${b - 1}`, reverse: ids[2]! })
    signals.push({ id: `SP${k}a`, name: 'loop', kind: 'three-aspect', from: ids[0], protects: ids[1] })
    signals.push({ id: `SP${k}c`, name: 'loop exit', kind: 'three-aspect', from: ids[2], protects: `U${b}` })
    const junction = signals.find(s => s.protects === `U${a}`)!
    junction.indicators = { [ids[0]!]: '1' }
  }
  const r = validateLayout({ schema: 1, name: `bench ${total}`, scale: { name: 'OO', ratio: 76.2 }, blocks, links, turnouts, signals })
  if (!r.ok) throw new Error(`generated layout is invalid: ${JSON.stringify(r.errors.slice(0, 3))}`)
  return r.layout
}

/**
 * Setup events (all turnouts normal, trains placed and described) and a long run of train movements.
 * `trains`: how many trains, spread evenly over both lines; null for one train every 10 blocks.
 */
function script(layout: Layout, moves: number, trainCount: number | null): { setup: LayoutEvent[], run: LayoutEvent[], trains: number } {
  let at = 1_700_000_000_000
  const setup: LayoutEvent[] = layout.turnouts.map(t => ({ type: 'turnout', turnout: t.id, position: 'normal', at: (at += 10) }))
  const perLine = layout.blocks.filter(b => b.id.startsWith('U')).length
  const perLineTrains = trainCount === null ? Math.floor(perLine / 10) : trainCount / 2
  const spacing = Math.floor(perLine / perLineTrains)
  const trains: { line: string, head: number }[] = []
  for (const line of ['U', 'D']) {
    for (let k = 0; k < perLineTrains; k++) trains.push({ line, head: 1 + k * spacing })
  }
  const det = (line: string, i: number) => `d${line}${((i % perLine) + perLine) % perLine}`
  for (const [n, t] of trains.entries()) {
    setup.push({ type: 'detector', detector: det(t.line, t.head - 1), occupied: true, at: (at += 10) })
    setup.push({ type: 'detector', detector: det(t.line, t.head), occupied: true, at: (at += 10) })
    setup.push({ type: 'interpose', block: `${t.line}${t.head}`, description: `2A${String(n % 100).padStart(2, '0')}`, at: (at += 10) })
  }
  const run: LayoutEvent[] = []
  let k = 0
  while (run.length < moves) {
    const t = trains[k++ % trains.length]!
    // head enters the next block, then the tail leaves the block behind
    run.push({ type: 'detector', detector: det(t.line, t.head + 1), occupied: true, at: (at += 50) })
    run.push({ type: 'detector', detector: det(t.line, t.head - 1), occupied: false, at: (at += 50) })
    t.head++
    if (run.length % 100 === 0) run.push({ type: 'override', signal: `S${t.line}${(t.head + 5) % perLine}`, mode: run.length % 200 ? 'hold' : 'auto', at: (at += 5) })
  }
  return { setup, run: run.slice(0, moves), trains: trains.length }
}

function time(fn: () => void): number {
  const t0 = performance.now()
  fn()
  return performance.now() - t0
}

const fmt = (n: number, digits = 1) => n.toLocaleString('en-GB', { maximumFractionDigits: digits, minimumFractionDigits: digits })

console.log('Blockbell signalling engine benchmark (times on this machine, Node', process.version + ')')
console.log('Trains run round two main-line loops; each event is a detector report (or, now and then, a signal override).')
console.log()
const rows: string[][] = [
  ['blocks', 'signals', 'trains', 'setup ms', 'applyEvent ev/s', 'applyEvent µs/ev', 'engine.apply ev/s', 'engine.apply µs/ev', 'changes/ev', 'computeIndications ms'],
]

for (const size of [500, 5_000, 50_000]) {
  const layout = generate(size)
  const setupMs = time(() => createEngine(layout))
  for (const trainCount of [20, null]) {
    const { setup, run, trains } = script(layout, 40_000, trainCount)

    // createEngine().apply: in place
    const engine = createEngine(layout)
    for (const e of setup) engine.apply(e)
    for (const e of run.slice(0, 2_000)) engine.apply(e) // warm-up
    const measured = run.slice(2_000)
    let changeCount = 0
    const engineMs = time(() => {
      for (const e of measured) changeCount += engine.apply(e).length
    })

    // applyEvent: pure, copies the maps it changes (the trains are placed with an engine, quicker for the setup)
    const placer = createEngine(layout)
    for (const e of setup) placer.apply(e)
    let state: LayoutState = structuredClone(placer.state())
    const pureCount = size >= 50_000 ? 300 : 3_000
    for (const e of run.slice(0, 100)) state = applyEvent(layout, state, e).state
    const pureEvents = run.slice(100, 100 + pureCount)
    const pureMs = time(() => {
      for (const e of pureEvents) state = applyEvent(layout, state, e).state
    })

    // a full computeIndications over the whole layout
    const reps = size >= 50_000 ? 5 : size >= 5_000 ? 20 : 200
    computeIndications(layout, state)
    const fullMs = time(() => {
      for (let i = 0; i < reps; i++) computeIndications(layout, state)
    }) / reps

    rows.push([
      fmt(layout.blocks.length, 0),
      fmt(layout.signals.length, 0),
      fmt(trains, 0),
      fmt(setupMs),
      fmt(pureEvents.length / (pureMs / 1000), 0),
      fmt((pureMs * 1000) / pureEvents.length),
      fmt(measured.length / (engineMs / 1000), 0),
      fmt((engineMs * 1000) / measured.length, 2),
      fmt(changeCount / measured.length, 2),
      fmt(fullMs, 2),
    ])
  }
}
const widths = rows[0]!.map((_, i) => Math.max(...rows.map(r => r[i]!.length)))
for (const r of rows) console.log(r.map((c, i) => c.padStart(widths[i]!)).join('  '))
console.log()
console.log('setup ms: createEngine (per-layout lookups and all indications), once per layout.')
console.log('applyEvent copies the occupancy map on each detector event, so its cost grows with the layout;')
console.log('engine.apply only recomputes the signals whose sections or next-signal chains include the block.')
