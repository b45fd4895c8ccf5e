import { z } from './zod'
import { CLEANING_METHODS } from '../maintenance/due'
import { ItemId } from './layout'

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
})
export type CleaningInput = z.infer<typeof CleaningBody>
