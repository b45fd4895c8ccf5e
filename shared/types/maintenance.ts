import type { DueState } from '../maintenance/due'

/** One block's use since its last cleaning and its due state, as the maintenance route returns it. */
export interface BlockMaintenance {
  block: string
  name: string
  passages: number
  occupiedSeconds: number
  dropouts: number
  lastCleanedAt: string | null
  state: DueState
  reasons: string[]
}

/** One recorded cleaning, newest first in the list. */
export interface CleaningRecord { id: number, blocks: string[], method: string, notes: string | null, at: string, by: string | null }
