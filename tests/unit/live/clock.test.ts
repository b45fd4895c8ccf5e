// The session's fast clock. Check values: docs/sources.md §6 (fast_elapsed = ratio x real_elapsed, [C] from the
// fast-clock sources listed there; there is no standard for fast clocks, common practice is 4:1 to 12:1).
import { describe, expect, it } from 'vitest'
import { modelMinutesElapsed, modelTime } from '#shared/live/clock'

const START = Date.UTC(2026, 0, 10, 19, 0, 0)
const MIN = 60_000
const session = (ratio: number, start: string | null) => ({ id: 1, name: 'Evening running', startedAt: START, fastClockRatio: ratio, fastClockStart: start })

describe('fast clock', () => {
  it.each([
    [4, 15, 60], // docs/sources.md §6: 4:1, 15 real min -> 60 fast min
    [6, 10, 60], // 6:1, 10 real min -> 60
    [12, 5, 60], // 12:1, 5 real min -> 60
    [5, 3, 15], // 5:1, 3 real min -> 15
  ])('at %i:1, %i real minutes are %i model minutes (docs/sources.md §6)', (ratio, real, model) => {
    expect(modelMinutesElapsed(session(ratio, '06:00'), START + real * MIN)).toBeCloseTo(model, 9)
  })

  it('reads 15:00 after 90 real minutes at 6:1 from a 06:00 start (docs/sources.md §6)', () => {
    expect(modelTime(session(6, '06:00'), START + 90 * MIN)).toEqual({ text: '15:00', timeOfDay: true, days: 0 })
  })

  it('runs past midnight into the next model day', () => {
    // 4:1 from 22:30: 45 real minutes are 180 model minutes -> 01:30 the next day (arithmetic)
    expect(modelTime(session(4, '22:30'), START + 45 * MIN)).toEqual({ text: '01:30', timeOfDay: true, days: 1 })
  })

  it('shows elapsed model time when the session has no start time of day', () => {
    expect(modelTime(session(6, null), START + 25 * MIN)).toEqual({ text: '02:30', timeOfDay: false, days: 0 })
  })

  it('stands at the start time before the session start (clock skew) instead of running backwards', () => {
    expect(modelTime(session(4, '06:00'), START - 5 * MIN).text).toBe('06:00')
  })
})
