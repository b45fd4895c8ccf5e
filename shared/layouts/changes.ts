import type { LayoutInput } from '#shared/schemas/layout'

/** The kinds of item a layout holds, as counted in a version's summary. */
export const ITEM_KINDS = ['blocks', 'links', 'turnouts', 'signals', 'areas', 'labels'] as const
export type ItemKind = typeof ITEM_KINDS[number]

export interface ChangeSummary {
  added: Partial<Record<ItemKind, number>>
  removed: Partial<Record<ItemKind, number>>
  changed: Partial<Record<ItemKind, number>>
  /** Something outside the items changed (name, scale, drawing size). */
  settings?: boolean
}

const SINGULAR: Record<ItemKind, string> = { blocks: 'block', links: 'link', turnouts: 'turnout', signals: 'signal', areas: 'area', labels: 'label' }

type Keyed = Map<string, string>

/** JSON with object keys sorted, so that two equal items compare equal whatever order their keys came in (JSONB reorders them). */
function stable(value: unknown): string {
  return JSON.stringify(value, (_key, v) => v && typeof v === 'object' && !Array.isArray(v)
    ? Object.fromEntries(Object.keys(v).sort().map(k => [k, (v as Record<string, unknown>)[k]]))
    : v)
}

// Each item keyed by what names it, with everything about it (its drawing included) as the value to compare.
function keyed(def: LayoutInput | null | undefined): Record<ItemKind, Keyed> {
  const d = def?.diagram
  const blocks: Keyed = new Map((def?.blocks ?? []).map(b => [b.id, stable([b, d?.blocks?.[b.id] ?? null])]))
  const links: Keyed = new Map((def?.links ?? []).map(l => [`${l.from}>${l.to}`, '']))
  const turnouts: Keyed = new Map((def?.turnouts ?? []).map(t => [t.id, stable([t, d?.turnouts?.[t.id] ?? null])]))
  const signals: Keyed = new Map((def?.signals ?? []).map(s => [s.id, stable([s, d?.signals?.[s.id] ?? null])]))
  const areas: Keyed = new Map((def?.areas ?? []).map(a => [a.id, stable(a)]))
  const labels: Keyed = new Map()
  for (const l of d?.labels ?? []) {
    let key = l.text
    for (let n = 2; labels.has(key); n++) key = `${l.text}#${n}`
    labels.set(key, stable(l))
  }
  return { blocks, links, turnouts, signals, areas, labels }
}

/** What changed from `before` to `after`, counted by kind (items are matched by id; labels by their text). */
export function summarizeChanges(before: LayoutInput | null | undefined, after: LayoutInput): ChangeSummary {
  const a = keyed(before)
  const b = keyed(after)
  const out: ChangeSummary = { added: {}, removed: {}, changed: {} }
  for (const kind of ITEM_KINDS) {
    let added = 0
    let removed = 0
    let changed = 0
    for (const [key, value] of b[kind]) {
      if (!a[kind].has(key)) added++
      else if (a[kind].get(key) !== value) changed++
    }
    for (const key of a[kind].keys()) if (!b[kind].has(key)) removed++
    if (added) out.added[kind] = added
    if (removed) out.removed[kind] = removed
    if (changed) out.changed[kind] = changed
  }
  const settings = (x: LayoutInput | null | undefined) => stable([x?.name, x?.scale, x?.diagram?.width, x?.diagram?.height])
  if (before && settings(before) !== settings(after)) out.settings = true
  return out
}

const counted = (n: number, kind: ItemKind) => `${n} ${n === 1 ? SINGULAR[kind] : kind}`

/** "2 blocks, 1 signal added; 1 turnout changed", or "no changes". */
export function describeChanges(s: ChangeSummary | null | undefined): string {
  if (!s) return 'no changes'
  const parts: string[] = []
  for (const [what, list] of [['added', s.added], ['removed', s.removed], ['changed', s.changed]] as const) {
    const items = ITEM_KINDS.filter(k => list?.[k]).map(k => counted(list![k]!, k))
    if (items.length) parts.push(`${items.join(', ')} ${what}`)
  }
  if (s.settings) parts.push('name, scale or drawing size changed')
  return parts.join('; ') || 'no changes'
}
