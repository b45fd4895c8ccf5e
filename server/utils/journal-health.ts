import type { JournalStats } from '../live/journal'

/** Writes failing for this long make the journal "stalled" (health is then not ok). */
export const JOURNAL_STALLED_AFTER_MS = 30_000

export interface JournalHealth {
  status: 'ok' | 'stalled'
  /** Entries that could never be stored and were set aside (admins see them at /api/journal/set-aside). */
  setAside: number
  /** Since when writes have failed (ISO time), or null. */
  failingSince: string | null
}

export function journalHealth(stats: JournalStats, now = Date.now()): JournalHealth {
  const stalled = stats.failingSince !== null && now - stats.failingSince >= JOURNAL_STALLED_AFTER_MS
  return {
    status: stalled ? 'stalled' : 'ok',
    setAside: stats.setAside,
    failingSince: stats.failingSince === null ? null : new Date(stats.failingSince).toISOString(),
  }
}
