import { describe, expect, it } from 'vitest'
import { GraphQuery, ListSessionsQuery, ReplayQuery, SessionEventsQuery, StartSessionBody } from '#shared/schemas/session'

const messages = (r: { success: boolean, error?: { issues: { path: PropertyKey[], message: string }[] } }) =>
  r.error?.issues.map(i => `${i.path.join('.')}: ${i.message}`) ?? []

describe('session list and log times', () => {
  it('reads epoch milliseconds and ISO 8601 dates alike', () => {
    const ms = Date.UTC(2026, 11, 2, 19, 30)
    expect(ListSessionsQuery.parse({ from: String(ms) }).from).toBe(ms)
    expect(ListSessionsQuery.parse({ from: '2026-12-02T19:30:00Z' }).from).toBe(ms)
    expect(SessionEventsQuery.parse({ to: '2026-12-02T19:30:00Z' }).to).toBe(ms)
  })

  it.each([
    ['abc', 'from: from is a date or time (ISO 8601) or epoch milliseconds'],
    ['1.5', 'from: from is a date or time (ISO 8601) or epoch milliseconds'],
    ['1969-12-31T00:00:00Z', 'from: from is after 1970'],
    // ECMA-262 §21.4.1.1: a Date holds at most 8.64e15 ms either side of the epoch
    ['8640000000000001', 'from: from is too far in the future'],
    ['99999999999999999999', 'from: from is too far in the future'],
  ])('refuses from=%s with a message that names the field', (from, message) => {
    expect(messages(ListSessionsQuery.safeParse({ from }))).toEqual([message])
  })

  it('takes the latest time a Date holds', () => {
    expect(SessionEventsQuery.parse({ from: '8640000000000000' }).from).toBe(8.64e15)
  })
})

describe('starting a session', () => {
  const body = { layout: 'wrenfold', name: 'Thursday running', fastClockRatio: 4 }

  it.each([[-5], ['abc'], ['25:00'], [{}]])('refuses fastClockStart %j with the expected form', (fastClockStart) => {
    expect(messages(StartSessionBody.safeParse({ ...body, fastClockStart }))).toEqual(['fastClockStart: fastClockStart is a time of day like 06:30'])
  })

  it('takes a time of day, or none', () => {
    expect(StartSessionBody.parse({ ...body, fastClockStart: '06:30' }).fastClockStart).toBe('06:30')
    expect(StartSessionBody.parse({ ...body, fastClockStart: '' }).fastClockStart).toBeNull()
  })
})

describe('replay and graph times', () => {
  it.each([
    [ReplayQuery, { at: '99999999999999999' }, 'at: at is too far in the future'],
    [ReplayQuery, { at: '-1' }, 'at: at is a time in epoch milliseconds'],
    [ReplayQuery, { at: '12.5' }, 'at: at is whole milliseconds'],
    [GraphQuery, { route: 'UM1', to: '99999999999999999' }, 'to: to is too far in the future'],
  ] as const)('%#: refuses a time out of range, naming the field', (schema, query, message) => {
    expect(messages(schema.safeParse(query))).toEqual([message])
  })
})
