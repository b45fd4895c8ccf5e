// When a maintenance task is due (shared/maintenance/tasks.ts). Dates are worked out by hand on the calendar;
// the 7-day "due soon" window is Blockbell's own choice.
import { describe, expect, it } from 'vitest'
import { daysUntil, taskNextDue, taskState } from '#shared/maintenance/tasks'

const NOW = Date.UTC(2026, 11, 7, 9, 30) // Monday 7 December 2026, 09:30 UTC
const created = Date.UTC(2026, 10, 1)

describe('maintenance task due state', () => {
  it('counts whole calendar days from today, whatever the hour', () => {
    expect(daysUntil('2026-12-07', NOW)).toBe(0)
    expect(daysUntil('2026-12-08', NOW)).toBe(1)
    expect(daysUntil('2026-12-01', NOW)).toBe(-6)
    expect(daysUntil('2027-01-01', NOW)).toBe(25) // 24 days left in December + 1
  })

  it('makes a one-off task due on its day, due soon in the 7 days before, and finished once done', () => {
    expect(taskState({ dueOn: '2026-12-07', repeatDays: null, createdAt: created, lastDoneAt: null }, NOW)).toEqual({ state: 'due', nextDue: '2026-12-07' })
    expect(taskState({ dueOn: '2026-12-14', repeatDays: null, createdAt: created, lastDoneAt: null }, NOW).state).toBe('due-soon')
    expect(taskState({ dueOn: '2026-12-15', repeatDays: null, createdAt: created, lastDoneAt: null }, NOW).state).toBe('ok')
    expect(taskState({ dueOn: '2026-12-01', repeatDays: null, createdAt: created, lastDoneAt: NOW - 86_400_000 }, NOW)).toEqual({ state: 'finished', nextDue: null })
  })

  it('repeats from the last time it was done, or from its date or setting-up before that', () => {
    // done on 10 November 2026 + 30 days = 10 December 2026
    expect(taskNextDue({ dueOn: null, repeatDays: 30, createdAt: created, lastDoneAt: Date.UTC(2026, 10, 10, 18) })).toBe('2026-12-10')
    // never done: 1 November 2026 + 28 days = 29 November 2026, overdue
    expect(taskState({ dueOn: null, repeatDays: 28, createdAt: created, lastDoneAt: null }, NOW)).toEqual({ state: 'due', nextDue: '2026-11-29' })
    expect(taskNextDue({ dueOn: '2027-02-01', repeatDays: 90, createdAt: created, lastDoneAt: null })).toBe('2027-02-01')
  })
})
