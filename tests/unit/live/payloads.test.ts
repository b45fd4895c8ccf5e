import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { DEVICE_TIME_FUTURE_MS, DEVICE_TIME_PAST_MS, parseDetectorPayload, parseDeviceStatusPayload, parseTurnoutPayload } from '../../../server/live/payloads'
import { journalEntryKey, journalTimeProblem, prepareJournalEntry } from '../../../server/live/journal-entry'

const NOW = Date.parse('2026-05-16T10:00:00.000Z')
const detector = (json: unknown) => parseDetectorPayload(Buffer.from(JSON.stringify(json)), NOW)
// The largest time value a JavaScript Date holds: 8.64e15 ms (ECMA-262 §21.4.1.1 "Time Values and Time Range").
const MAX_DATE_MS = 8.64e15

describe('detector payload times', () => {
  it('keeps a device time within the window around the receive time', () => {
    expect(detector({ occupied: true, at: NOW - 5000 })).toEqual({ ok: true, value: { occupied: true, at: NOW - 5000 } })
    expect(detector({ occupied: false, at: NOW + DEVICE_TIME_FUTURE_MS })).toEqual({ ok: true, value: { occupied: false, at: NOW + DEVICE_TIME_FUTURE_MS } })
  })

  it('uses the receive time, and says why, for a time beyond any date, a clock never set, or one far ahead', () => {
    for (const at of [8_700_000_000_000_000, 1, NOW - DEVICE_TIME_PAST_MS - 1, NOW + DEVICE_TIME_FUTURE_MS + 1]) {
      const parsed = detector({ occupied: true, at })
      expect(parsed).toMatchObject({ ok: true, value: { occupied: true } })
      expect(parsed.ok && parsed.value.at).toBeUndefined()
      expect(parsed.ok && parsed.value.timeReplaced).toMatch(/the receive time is used/)
    }
  })

  it('never lets a time through that the journal cannot store, whatever the device sends (fuzz)', () => {
    const at = fc.oneof(
      fc.double(),
      fc.integer(),
      fc.bigInt({ min: -(2n ** 70n), max: 2n ** 70n }).map(Number),
      fc.integer({ min: -DEVICE_TIME_PAST_MS * 2, max: DEVICE_TIME_FUTURE_MS * 2 }).map(d => NOW + d),
      fc.constantFrom(MAX_DATE_MS, MAX_DATE_MS + 1, -MAX_DATE_MS, Number.MAX_SAFE_INTEGER, 0, -1),
    )
    fc.assert(fc.property(at, fc.boolean(), (value, occupied) => {
      const parsed = detector({ occupied, at: value })
      if (!parsed.ok) return // refused (e.g. not a positive whole number): nothing reaches the journal
      const used = parsed.value.at ?? NOW
      expect(Math.abs(used - NOW)).toBeLessThanOrEqual(DEVICE_TIME_PAST_MS)
      expect(journalTimeProblem(used)).toBeNull()
    }), { numRuns: 5000 })
  })

  it('reads payloads of every size without throwing, refusing those over 1 KiB (fuzz)', () => {
    const parsers = [parseDetectorPayload, parseTurnoutPayload, parseDeviceStatusPayload]
    fc.assert(fc.property(fc.uint8Array({ maxLength: 4096 }), fc.constantFrom(...parsers), (bytes, parse) => {
      const parsed = parse(Buffer.from(bytes))
      if (bytes.length > 1024) expect(parsed).toEqual({ ok: false, reason: 'payload over 1024 bytes' })
      expect(typeof parsed.ok).toBe('boolean')
    }), { numRuns: 2000 })
  })
})

describe('journal entry times', () => {
  it('replaces a time the database cannot store with the append time (fuzz)', () => {
    fc.assert(fc.property(fc.oneof(fc.double(), fc.integer({ min: -MAX_DATE_MS, max: MAX_DATE_MS })), (at) => {
      const { stored } = prepareJournalEntry({ layoutId: 1, sessionId: null, at, type: 'detector', subject: 'D01', payload: {}, userId: null }, 1, journalEntryKey('boot', 1))
      expect(journalTimeProblem(stored.at)).toBeNull()
      expect(() => new Date(stored.at).toISOString()).not.toThrow()
    }), { numRuns: 3000 })
  })
})
