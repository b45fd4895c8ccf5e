/**
 * When a block's track is due for cleaning. Blockbell counts what the journal saw since the block was last
 * cleaned — train passages, hours occupied, detector dropouts, days — and compares each with the layout's
 * thresholds (the admin sets them; `null` leaves a counter out). A block is due once any counter reaches its
 * threshold, and due soon from `DUE_SOON_SHARE` of it. A block never cleaned is due soon while a days threshold is set.
 */
export const DUE_STATES = ['ok', 'due-soon', 'due'] as const
export type DueState = typeof DUE_STATES[number]

export const DUE_SOON_SHARE = 0.8

export interface CleaningThresholds {
  passages: number | null
  occupiedHours: number | null
  dropouts: number | null
  days: number | null
}

/**
 * Blockbell's starting values, our own choice and not a published figure: adjust them to your layout. A
 * common practice among modellers is to clean running lines every few operating sessions and after dusty work.
 */
export const DEFAULT_THRESHOLDS: CleaningThresholds = { passages: 200, occupiedHours: 20, dropouts: 5, days: 60 }

export interface BlockUse {
  passages: number
  occupiedSeconds: number
  dropouts: number
  /** epoch ms of the last cleaning, or null when never cleaned */
  lastCleanedAt: number | null
}

export interface DueVerdict {
  state: DueState
  /** How far along the worst counter is, 0..1+ (1 = at its threshold); for sorting, most due first. */
  share: number
  /** What makes it due or due soon, in words: "212 passages of 200". */
  reasons: string[]
}

const DAY_MS = 86_400_000

/** A counter against its limit (`null` or 0: not counted), with its words for the reasons. */
export interface DueCounter { value: number, limit: number | null, words: (value: number, limit: number) => string }

/** How far along the worst counter is (1 = at its limit), and the words for every counter from due soon on. */
export function worstCounter(counters: DueCounter[]): { share: number, reasons: string[] } {
  let share = 0
  const reasons: string[] = []
  for (const c of counters) {
    if (c.limit === null || c.limit <= 0) continue
    const s = c.value / c.limit
    if (s >= DUE_SOON_SHARE) reasons.push(c.words(c.value, c.limit))
    share = Math.max(share, s)
  }
  return { share, reasons }
}

export const dueStateOf = (share: number): DueState => share >= 1 ? 'due' : share >= DUE_SOON_SHARE ? 'due-soon' : 'ok'

export function dueState(use: BlockUse, thresholds: CleaningThresholds, now: number): DueVerdict {
  const counters: DueCounter[] = [
    { value: use.passages, limit: thresholds.passages, words: (v, l) => `${v} passages of ${l}` },
    { value: use.occupiedSeconds / 3600, limit: thresholds.occupiedHours, words: (v, l) => `${v.toFixed(1)} hours occupied of ${l}` },
    { value: use.dropouts, limit: thresholds.dropouts, words: (v, l) => `${v} dropouts of ${l}` },
  ]
  if (use.lastCleanedAt !== null) {
    counters.push({ value: (now - use.lastCleanedAt) / DAY_MS, limit: thresholds.days, words: (v, l) => `${Math.floor(v)} days since cleaned of ${l}` })
  }
  let { share, reasons } = worstCounter(counters)
  if (use.lastCleanedAt === null && thresholds.days !== null) {
    // never cleaned: due soon, so a new layout asks for a first cleaning to count from without crying wolf
    reasons = [...reasons, 'no cleaning recorded yet']
    share = Math.max(share, DUE_SOON_SHARE)
  }
  return { state: dueStateOf(share), share, reasons }
}

export const CLEANING_METHODS = ['dry brush', 'vacuum', 'wipe', 'abrasive block', 'fluid', 'other'] as const
