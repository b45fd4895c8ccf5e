import { LayoutDefinition, type Layout, type Point } from '../schemas/layout'
import { buildTopology, isStop, onward, placeKey } from './topology'
import type { ValidationError, ValidationResult } from './types'

function pathString(path: readonly PropertyKey[]): string {
  let s = ''
  for (const p of path) {
    if (typeof p === 'number') s += `[${p}]`
    else s += s === '' ? String(p) : `.${String(p)}`
  }
  return s
}

/**
 * Checks a layout definition: its shape (schema), then its cross-references. Every error names the path of
 * the offending value (e.g. `signals[3].protects`) and says what is wrong.
 */
export function validateLayout(def: unknown): ValidationResult {
  const parsed = LayoutDefinition.safeParse(def)
  if (!parsed.success) {
    return {
      ok: false,
      errors: parsed.error.issues.map(i => ({ path: pathString(i.path) || '(layout)', message: i.message })),
    }
  }
  const layout = parsed.data
  const errors = checkReferences(layout)
  return errors.length ? { ok: false, errors } : { ok: true, layout }
}

function checkReferences(layout: Layout): ValidationError[] {
  const errors: ValidationError[] = []
  const err = (path: string, message: string) => errors.push({ path, message })

  const firstIndex = <T extends { id: string }>(items: T[], what: string, list: string) => {
    const seen = new Map<string, number>()
    items.forEach((it, i) => {
      const prev = seen.get(it.id)
      if (prev !== undefined) err(`${list}[${i}].id`, `duplicate ${what} id "${it.id}" (also ${list}[${prev}])`)
      else seen.set(it.id, i)
    })
    return seen
  }
  const blocks = firstIndex(layout.blocks, 'block', 'blocks')
  const turnouts = firstIndex(layout.turnouts, 'turnout', 'turnouts')
  const signals = firstIndex(layout.signals, 'signal', 'signals')
  firstIndex(layout.areas, 'area', 'areas')

  // detectors: each feeds exactly one block
  const detectorAt = new Map<string, string>()
  layout.blocks.forEach((b, i) => {
    b.detectors.forEach((d, j) => {
      const prev = detectorAt.get(d)
      if (prev !== undefined) err(`blocks[${i}].detectors[${j}]`, `detector "${d}" is already used by ${prev}`)
      else detectorAt.set(d, `block "${b.id}"`)
    })
  })

  // links
  const links = new Set<string>()
  layout.links.forEach((l, i) => {
    if (!blocks.has(l.from)) err(`links[${i}].from`, `unknown block "${l.from}"`)
    if (!blocks.has(l.to)) err(`links[${i}].to`, `unknown block "${l.to}"`)
    if (l.from === l.to) err(`links[${i}]`, `a link from block "${l.from}" to itself`)
    const k = placeKey(l.from, l.to)
    if (links.has(k)) err(`links[${i}]`, `duplicate link "${l.from}" -> "${l.to}"`)
    links.add(k)
  })
  const linked = (a: string, b: string) => links.has(placeKey(a, b)) || links.has(placeKey(b, a))

  // turnouts
  const legTaken = new Map<string, string>()
  layout.turnouts.forEach((t, i) => {
    if (!blocks.has(t.block)) {
      err(`turnouts[${i}].block`, `unknown block "${t.block}"`)
      return
    }
    for (const side of ['normal', 'reverse'] as const) {
      const leg = t[side]
      if (!blocks.has(leg)) err(`turnouts[${i}].${side}`, `unknown block "${leg}"`)
      else if (!linked(t.block, leg)) err(`turnouts[${i}].${side}`, `block "${leg}" is not linked to the turnout's block "${t.block}"`)
      const k = placeKey(t.block, leg)
      const other = legTaken.get(k)
      if (other !== undefined && other !== t.id) err(`turnouts[${i}].${side}`, `leg "${leg}" of block "${t.block}" already belongs to turnout "${other}"`)
      legTaken.set(k, t.id)
    }
    if (t.normal === t.reverse) err(`turnouts[${i}].reverse`, `normal and reverse are the same block "${t.normal}"`)
  })

  const topo = buildTopology(layout)

  // forks: in every direction of travel through a block, at most two ways on, and two only where a turnout chooses
  layout.blocks.forEach((b, i) => {
    if (blocks.get(b.id) !== i) return
    const inc = topo.inc.get(b.id) ?? []
    const out = topo.out.get(b.id) ?? []
    const tos = topo.turnoutsIn.get(b.id) ?? []
    const chooses = (c: string[]) => tos.some(t => c.length === 2 && c.includes(t.normal) && c.includes(t.reverse))
    const entries: (string | null)[] = inc.length ? inc : [null]
    const reported = new Set<string>()
    for (const p of entries) {
      const c = onward(topo, b.id, p)
      const key = [...c].sort().join(',')
      if (c.length <= 1 || reported.has(key)) continue
      reported.add(key)
      const from = p === null ? '' : ` for a train arriving from "${p}"`
      if (c.length > 2) err(`blocks[${i}]`, `block "${b.id}" has ${c.length} ways on (${c.join(', ')})${from}; at most two are allowed`)
      else if (!chooses(c)) err(`blocks[${i}]`, `block "${b.id}" forks to "${c[0]}" and "${c[1]}"${from} with no turnout choosing between them`)
    }
    // trailing: trains from two blocks merge into one exit only through a turnout
    const exits: (string | null)[] = out.length ? out : [null]
    for (const n of exits) {
      const c = inc.filter(p => n === null || onward(topo, b.id, p).includes(n))
      const key = `in:${[...c].sort().join(',')}`
      if (c.length <= 1 || reported.has(key)) continue
      reported.add(key)
      const to = n === null ? '' : ` towards "${n}"`
      if (c.length > 2) err(`blocks[${i}]`, `block "${b.id}" is entered from ${c.length} blocks (${c.join(', ')})${to}; at most two are allowed`)
      else if (!chooses(c)) err(`blocks[${i}]`, `trains from "${c[0]}" and "${c[1]}" merge in block "${b.id}"${to} with no turnout choosing between them`)
    }
  })

  // signals
  const place = new Map<string, number>()
  layout.signals.forEach((s, i) => {
    const fromOk = blocks.has(s.from)
    const protOk = blocks.has(s.protects)
    if (!fromOk) err(`signals[${i}].from`, `unknown block "${s.from}"`)
    if (!protOk) err(`signals[${i}].protects`, `unknown block "${s.protects}"`)
    if (!fromOk || !protOk) return
    if (!links.has(placeKey(s.from, s.protects))) {
      err(`signals[${i}].protects`, `"${s.from}" -> "${s.protects}" is not a link, so the signal cannot read into "${s.protects}"`)
      return
    }
    const k = `${isStop(s) ? 'stop' : 'distant'}:${placeKey(s.from, s.protects)}`
    const prev = place.get(k)
    if (prev !== undefined) err(`signals[${i}]`, `signals[${prev}] already stands at the exit of "${s.from}" reading into "${s.protects}"`)
    else place.set(k, i)
    if (s.indicators) {
      const reach = topo.reach.get(s.id)
      for (const leg of Object.keys(s.indicators)) {
        if (!blocks.has(leg)) err(`signals[${i}].indicators.${leg}`, `unknown block "${leg}"`)
        else if (signals.get(s.id) === i && !reach?.facingLegs.has(leg))
          err(`signals[${i}].indicators.${leg}`, `block "${leg}" is not a leg of a facing turnout on this signal's routes`)
      }
    }
  })

  // areas
  const signalArea = new Map<string, string>()
  const turnoutArea = new Map<string, string>()
  layout.areas.forEach((a, i) => {
    a.signals.forEach((s, j) => {
      if (!signals.has(s)) err(`areas[${i}].signals[${j}]`, `unknown signal "${s}"`)
      else if (signalArea.has(s)) err(`areas[${i}].signals[${j}]`, `signal "${s}" is already in area "${signalArea.get(s)}"`)
      else signalArea.set(s, a.id)
    })
    a.turnouts.forEach((t, j) => {
      if (!turnouts.has(t)) err(`areas[${i}].turnouts[${j}]`, `unknown turnout "${t}"`)
      else if (turnoutArea.has(t)) err(`areas[${i}].turnouts[${j}]`, `turnout "${t}" is already in area "${turnoutArea.get(t)}"`)
      else turnoutArea.set(t, a.id)
    })
  })

  // decoder addresses: one description per address
  const addressAt = new Map<number, number>()
  layout.decoders.forEach((entry, i) => {
    const first = addressAt.get(entry.address)
    if (first !== undefined) err(`decoders[${i}].address`, `address ${entry.address} is already listed at decoders[${first}]`)
    else addressAt.set(entry.address, i)
  })

  // diagram
  const d = layout.diagram
  const inside = (p: Point) => p[0] >= 0 && p[1] >= 0 && p[0] <= d.width && p[1] <= d.height
  const outside = (path: string, p: Point) => err(path, `point [${p[0]}, ${p[1]}] lies outside the ${d.width} x ${d.height} drawing`)
  for (const [id, b] of Object.entries(d.blocks)) {
    if (!blocks.has(id)) err(`diagram.blocks.${id}`, `unknown block "${id}"`)
    b.path.forEach((p, j) => inside(p) || outside(`diagram.blocks.${id}.path[${j}]`, p))
    if (b.label && !inside(b.label)) outside(`diagram.blocks.${id}.label`, b.label)
  }
  for (const [id, s] of Object.entries(d.signals)) {
    if (!signals.has(id)) err(`diagram.signals.${id}`, `unknown signal "${id}"`)
    if (!inside(s.at)) outside(`diagram.signals.${id}.at`, s.at)
  }
  for (const [id, t] of Object.entries(d.turnouts)) {
    if (!turnouts.has(id)) err(`diagram.turnouts.${id}`, `unknown turnout "${id}"`)
    if (!inside(t.at)) outside(`diagram.turnouts.${id}.at`, t.at)
  }
  d.labels.forEach((l, j) => inside(l.at) || outside(`diagram.labels[${j}].at`, l.at))

  return errors
}
