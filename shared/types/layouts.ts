import type { ChangeSummary } from '#shared/layouts/changes'

/** One line of the Layouts list. */
export interface LayoutSummary {
  id: number
  slug: string
  name: string
  /** The current version (the one that runs). */
  version: number
  /** The newest saved version, drafts included. */
  latestVersion: number
  scale: string | null
  blocks: number
  signals: number
  turnouts: number
  areas: number
  updatedAt: string
  archived: boolean
  /** A running operating session uses it. */
  inUse: boolean
  /** It has journal entries (so it can be archived, never deleted). */
  hasJournal: boolean
  lastSavedBy: string | null
  lastSavedAt: string | null
}

/** One saved version in a layout's history. */
export interface LayoutVersionView {
  version: number
  createdAt: string
  author: string | null
  summary: ChangeSummary
  valid: boolean
  current: boolean
}

/** An item of the wiring schedule. */
export interface WiringItem {
  kind: 'detector' | 'signal' | 'turnout'
  id: string
  block: string
  area: string | null
  topic: string
  deviceId: number | null
  device: string | null
}
