import { describe, expect, it } from 'vitest'
import { JOURNAL_STALLED_AFTER_MS, journalHealth } from '../../../server/utils/journal-health'
import type { JournalStats } from '../../../server/live/journal'

const stats = (over: Partial<JournalStats>): JournalStats => ({
  queued: 0, spilled: 0, written: 0, writeFailures: 0, databaseUp: true, lastError: null, alreadyStored: 0, rejected: 0, setAside: 0, failingSince: null, ...over,
})

describe('journal health', () => {
  const now = Date.parse('2026-05-16T10:00:00.000Z')

  it('is ok while writes succeed, and counts the set-aside entries', () => {
    expect(journalHealth(stats({ setAside: 2 }), now)).toEqual({ status: 'ok', setAside: 2, failingSince: null })
  })

  it('is ok through a short failure and stalled once writes have failed for the whole limit', () => {
    expect(journalHealth(stats({ failingSince: now - JOURNAL_STALLED_AFTER_MS + 1, databaseUp: false }), now).status).toBe('ok')
    expect(journalHealth(stats({ failingSince: now - JOURNAL_STALLED_AFTER_MS, databaseUp: false }), now))
      .toEqual({ status: 'stalled', setAside: 0, failingSince: '2026-05-16T09:59:30.000Z' })
  })
})
