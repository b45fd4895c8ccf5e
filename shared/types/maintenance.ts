import type { DueState } from '#shared/maintenance/due'
import type { UploadedPhoto } from '#shared/types/uploads'
import type { TaskState } from '#shared/maintenance/tasks'

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
export interface CleaningRecord { id: number, blocks: string[], method: string, notes: string | null, at: string, by: string | null, photos: UploadedPhoto[] }

/** One item of the stock roster with its running since its last service, as the roster route returns it. */
export interface StockItem {
  id: number
  name: string
  number: string | null
  notes: string | null
  photo: UploadedPhoto | null
  serviceHours: number | null
  serviceKm: number | null
  /** The train description it runs under now, if any. */
  description: string | null
  lastServicedAt: string | null
  /** How many services are recorded for it (they go with it when it is removed). */
  serviceCount: number
  /** Since the last service (or ever): passages of blocks, running seconds, scale metres. */
  passages: number
  seconds: number
  scaleMetres: number
  state: DueState
  reasons: string[]
}

export interface StockService { id: number, at: string, by: string | null, note: string | null }

/** A maintenance task other than track cleaning, with when it is next due. */
export interface MaintenanceTask {
  id: number
  title: string
  notes: string | null
  assignee: { id: number, name: string } | null
  dueOn: string | null
  repeatDays: number | null
  lastDoneAt: string | null
  /** How many times it is recorded as done (the done log goes with it when it is removed). */
  doneCount: number
  nextDue: string | null
  state: TaskState
}

export interface TaskLogEntry { id: number, at: string, by: string | null, note: string | null }
