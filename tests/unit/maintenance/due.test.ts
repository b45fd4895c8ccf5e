// When a block is due for cleaning: each threshold on its own, at and past its value. The thresholds are the
// layout owner's; the 80 % "due soon" share is Blockbell's own choice (common practice is to clean before
// the track gives trouble, not after).
import { describe, expect, it } from 'vitest'
import { dueState, type CleaningThresholds } from '#shared/maintenance/due'

const NOW = Date.UTC(2026, 11, 1)
const DAY = 86_400_000
const none: CleaningThresholds = { passages: null, occupiedHours: null, dropouts: null, days: null }
const fresh = { passages: 0, occupiedSeconds: 0, dropouts: 0, lastCleanedAt: NOW - DAY }

describe('due state', () => {
  it.each([
    ['passages below 80 %', { passages: 79 }, { passages: 100 }, 'ok'],
    ['passages at 80 %', { passages: 80 }, { passages: 100 }, 'due-soon'],
    ['passages at the threshold', { passages: 100 }, { passages: 100 }, 'due'],
    ['hours occupied past it (36,000 s = 10 h)', { occupiedSeconds: 36_000 }, { occupiedHours: 10 }, 'due'],
    ['hours occupied at 9 of 10', { occupiedSeconds: 32_400 }, { occupiedHours: 10 }, 'due-soon'],
    ['dropouts at the threshold', { dropouts: 5 }, { dropouts: 5 }, 'due'],
    ['days since cleaned: 30 of 30', { lastCleanedAt: NOW - 30 * DAY }, { days: 30 }, 'due'],
    ['days since cleaned: 10 of 30', { lastCleanedAt: NOW - 10 * DAY }, { days: 30 }, 'ok'],
    ['never cleaned, with a days threshold', { lastCleanedAt: null }, { days: 30 }, 'due-soon'],
    ['never cleaned, no days threshold', { lastCleanedAt: null }, {}, 'ok'],
    ['a counter with no threshold counts for nothing', { passages: 10_000 }, { dropouts: 5 }, 'ok'],
  ] as const)('%s', (_, use, thresholds, expected) => {
    expect(dueState({ ...fresh, ...use }, { ...none, ...thresholds }, NOW).state).toBe(expected)
  })

  it('says why, and the worst counter decides', () => {
    const v = dueState({ passages: 212, occupiedSeconds: 3600, dropouts: 1, lastCleanedAt: NOW - DAY }, { passages: 200, occupiedHours: 20, dropouts: 5, days: 60 }, NOW)
    expect(v.state).toBe('due')
    expect(v.reasons).toEqual(['212 passages of 200'])
    expect(v.share).toBeCloseTo(1.06)
  })
})
