import { dueStateOf, worstCounter, type DueCounter, type DueState } from './due'

/**
 * Running time and distance of one stock item, from the journal's train-description entries while the item ran
 * under a description. Each arrival of its description in a block (a step, or an interpose) is one passage of
 * that block: the distance adds the block's length, scaled by the layout's scale (model millimetres x ratio =
 * scale millimetres). Its running time is the time it held at least one berth (from its first arrival until
 * its last berth cleared), within the window it ran under that description.
 */
export interface DescriptionEntry {
  /** epoch ms */
  at: number
  block: string
  /** The block's description after this entry; null when its berth cleared. */
  description: string | null
}

export interface StockRunning { passages: number, seconds: number, scaleMetres: number }

export function stockRunning(
  entries: DescriptionEntry[], description: string, window: { from: number, to: number },
  lengthsMm: Record<string, number>, ratio: number,
): StockRunning {
  const held = new Set<string>()
  let heldSince = 0
  let passages = 0
  let modelMm = 0
  let ms = 0
  for (const e of entries) {
    if (e.at < window.from || e.at > window.to) continue
    if (e.description === description) {
      if (held.has(e.block)) continue
      if (held.size === 0) heldSince = e.at
      held.add(e.block)
      passages++
      modelMm += lengthsMm[e.block] ?? 0
    } else if (held.delete(e.block) && held.size === 0) {
      ms += e.at - heldSince
    }
  }
  if (held.size) ms += window.to - heldSince
  return { passages, seconds: ms / 1000, scaleMetres: modelMm * ratio / 1000 }
}

export interface ServiceInterval {
  /** Running hours between services, or null. */
  hours: number | null
  /** Scale kilometres between services, or null. */
  km: number | null
}

/** Due when the running since the last service reaches an interval, due soon from DUE_SOON_SHARE of it. */
export function stockDueState(running: { seconds: number, scaleMetres: number }, interval: ServiceInterval): { state: DueState, reasons: string[] } {
  const counters: DueCounter[] = [
    { value: running.seconds / 3600, limit: interval.hours, words: (v: number, l: number) => `${v.toFixed(1)} running hours of ${l}` },
    { value: running.scaleMetres / 1000, limit: interval.km, words: (v: number, l: number) => `${v.toFixed(1)} scale km of ${l}` },
  ]
  const { share, reasons } = worstCounter(counters)
  return { state: dueStateOf(share), reasons }
}
