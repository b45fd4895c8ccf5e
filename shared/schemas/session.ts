import { z } from './zod'

/** Fast-clock ratio: model minutes per real minute (4 means 4:1). */
export const FAST_CLOCK_MAX = 60

const ClockTime = z.string().trim().regex(/^([01]?\d|2[0-3]):[0-5]\d$/, 'fastClockStart is a time of day like 06:30')

export const StartSessionBody = z.object({
  layout: z.string({ error: 'layout is the slug of a layout' }).trim().min(1, 'layout is required').max(64),
  name: z.string({ error: 'name is required' }).trim().min(1, 'name is required').max(120, 'name is at most 120 characters'),
  fastClockRatio: z.coerce.number({ error: 'fastClockRatio is a number' })
    .positive('fastClockRatio is more than 0')
    .max(FAST_CLOCK_MAX, `fastClockRatio is at most ${FAST_CLOCK_MAX}`),
  fastClockStart: z.union([ClockTime, z.literal('').transform(() => null), z.null()], { error: 'fastClockStart is a time of day like 06:30' }).optional(),
  notes: z.string().trim().max(2000, 'notes are at most 2000 characters').optional(),
})
export type StartSessionBody = z.infer<typeof StartSessionBody>

/** The latest time a JavaScript Date holds (ECMA-262 §21.4.1.1: ±8.64e15 ms from the epoch). */
const LATEST_TIME_MS = 8.64e15

/** A time given as epoch milliseconds or as an ISO 8601 date or time. */
const When = (name: string) => {
  const message = `${name} is a date or time (ISO 8601) or epoch milliseconds`
  return z.preprocess((v) => {
    if (typeof v !== 'string') return v
    const text = v.trim()
    if (/^-?\d+(\.\d*)?$/.test(text)) return Number(text)
    const parsed = Date.parse(text)
    return Number.isNaN(parsed) ? text : parsed
  }, z.number({ error: message })
    .min(0, { error: `${name} is after 1970`, abort: true })
    .max(LATEST_TIME_MS, { error: `${name} is too far in the future`, abort: true })
    .int(message)).optional()
}

export const ListSessionsQuery = z.object({
  layout: z.string().trim().min(1).max(64).optional(),
  from: When('from'),
  to: When('to'),
  limit: z.coerce.number({ error: 'limit is a number' }).int().min(1, 'limit is at least 1').max(100, 'limit is at most 100').default(20),
  page: z.coerce.number({ error: 'page is a number' }).int().min(1, 'page is at least 1').max(10_000).default(1),
})
export type ListSessionsQuery = z.infer<typeof ListSessionsQuery>

const Id = z.string().trim().min(1).max(64)

export const SessionEventsQuery = z.object({
  kind: z.string().trim().min(1).max(48).optional(),
  block: Id.optional(),
  signal: Id.optional(),
  description: z.string().trim().min(1).max(16).optional(),
  user: z.coerce.number({ error: 'user is a person id' }).int().positive().optional(),
  from: When('from'),
  to: When('to'),
  order: z.enum(['asc', 'desc'], { error: 'order is asc or desc' }).default('asc'),
  limit: z.coerce.number({ error: 'limit is a number' }).int().min(1, 'limit is at least 1').max(500, 'limit is at most 500').default(50),
  after: z.string().trim().max(200).optional(),
})
export type SessionEventsQuery = z.infer<typeof SessionEventsQuery>

export const ReplayQuery = z.object({
  at: z.coerce.number({ error: 'at is a time in epoch milliseconds' }).nonnegative('at is a time in epoch milliseconds')
    .max(LATEST_TIME_MS, { error: 'at is too far in the future', abort: true }).int('at is whole milliseconds'),
})

export const GraphQuery = z.object({
  route: z.string({ error: 'route is a comma-separated list of block ids' }).trim().min(1, 'route lists at least one block').max(2000)
    .transform(v => v.split(',').map(s => s.trim()).filter(Boolean))
    .refine(v => v.length > 0 && v.length <= 200, 'route lists 1 to 200 blocks'),
  from: z.coerce.number({ error: 'from is a time in epoch milliseconds' }).nonnegative('from is a time in epoch milliseconds')
    .max(LATEST_TIME_MS, { error: 'from is too far in the future', abort: true }).int('from is whole milliseconds').optional(),
  to: z.coerce.number({ error: 'to is a time in epoch milliseconds' }).nonnegative('to is a time in epoch milliseconds')
    .max(LATEST_TIME_MS, { error: 'to is too far in the future', abort: true }).int('to is whole milliseconds').optional(),
  width: z.coerce.number({ error: 'width is the graph\'s width in pixels' }).int('width is whole pixels').min(100, 'width is at least 100 pixels').max(4000, 'width is at most 4000 pixels').default(1200),
}).refine(q => q.from === undefined || q.to === undefined || q.from < q.to, { message: 'from is before to', path: ['from'] })

export const DeleteSessionBody = z.object({
  confirm: z.string({ error: 'confirm is the name of the session' }).trim().min(1, 'confirm is the name of the session'),
})
