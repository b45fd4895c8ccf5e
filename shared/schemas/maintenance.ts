import { z } from './zod'
import { CLEANING_METHODS } from '../maintenance/due'
import { ItemId } from './layout'
import { UploadId } from './uploads'

const limit = (max: number) => z.number({ error: 'a number, or empty to leave it out' })
  .int('a whole number').min(1, 'at least 1').max(max, `at most ${max.toLocaleString('en')}`).nullable()

export const ThresholdsBody = z.object({
  passages: limit(1_000_000),
  occupiedHours: limit(100_000),
  dropouts: limit(1_000_000),
  days: limit(3650),
})
export type ThresholdsInput = z.infer<typeof ThresholdsBody>

export const CleaningBody = z.object({
  blocks: z.array(ItemId, { error: 'pick at least one block' }).min(1, 'pick at least one block').max(2000, 'at most 2,000 blocks'),
  method: z.enum(CLEANING_METHODS, { error: `one of ${CLEANING_METHODS.join(', ')}` }),
  notes: z.string().trim().max(2000, 'at most 2,000 characters').optional(),
  /** When it was done (epoch ms); now when left out. Not in the future, not before 2000. */
  at: z.number().int().min(946_684_800_000, 'not before the year 2000').optional(),
  /** Photos uploaded first (POST /api/uploads), by id. */
  photos: z.array(UploadId).max(12, 'at most 12 photos').optional(),
})
export type CleaningInput = z.infer<typeof CleaningBody>

const interval = (max: number) => z.number({ error: 'a number, or empty to leave it out' }).positive('more than 0').max(max, `at most ${max.toLocaleString('en')}`).nullable()

export const StockBody = z.object({
  name: z.string({ error: 'give the item a name' }).trim().min(1, 'give the item a name').max(80, 'at most 80 characters'),
  number: z.string().trim().max(32, 'at most 32 characters').optional(),
  notes: z.string().trim().max(2000, 'at most 2,000 characters').optional(),
  photo: UploadId.nullable().optional(),
  serviceHours: interval(100_000),
  serviceKm: interval(1_000_000),
})
export type StockInput = z.infer<typeof StockBody>

export const StockDescriptionBody = z.object({
  /** The train description the item runs under from now; null when it no longer runs under one. */
  description: z.string({ error: 'a train description, or null' }).trim().min(1, 'a train description, or null').max(16, 'at most 16 characters').nullable(),
})

export const StockServiceBody = z.object({
  note: z.string().trim().max(2000, 'at most 2,000 characters').optional(),
})

export const TaskBody = z.object({
  title: z.string({ error: 'say what is to be done' }).trim().min(1, 'say what is to be done').max(120, 'at most 120 characters'),
  notes: z.string().trim().max(2000, 'at most 2,000 characters').optional(),
  assigneeId: z.number({ error: 'a person, or null' }).int().positive().nullable().optional(),
  /** 'YYYY-MM-DD' */
  dueOn: z.iso.date('a date as YYYY-MM-DD').nullable().optional(),
  repeatDays: z.number({ error: 'a number of days, or null' }).int('a whole number of days').min(1, 'at least 1 day').max(3650, 'at most 3,650 days').nullable().optional(),
}).refine(t => t.dueOn || t.repeatDays, { message: 'give a due date, a repeat interval or both', path: ['dueOn'] })
export type TaskInput = z.infer<typeof TaskBody>

export const TaskDoneBody = z.object({
  note: z.string().trim().max(2000, 'at most 2,000 characters').optional(),
})
