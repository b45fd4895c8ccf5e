import { z } from 'zod'
import { CLEANING_METHODS } from '../maintenance/due'
import { ItemId } from './layout'

const limit = (what: string, max: number) => z.number({ error: `${what}: a number, or empty to leave it out` })
  .int(`${what}: a whole number`).min(1, `${what}: at least 1`).max(max, `${what}: at most ${max}`).nullable()

export const ThresholdsBody = z.object({
  passages: limit('passages', 1_000_000),
  occupiedHours: limit('occupiedHours', 100_000),
  dropouts: limit('dropouts', 1_000_000),
  days: limit('days', 3650),
})
export type ThresholdsInput = z.infer<typeof ThresholdsBody>

export const CleaningBody = z.object({
  blocks: z.array(ItemId, { error: 'blocks: pick at least one block' }).min(1, 'blocks: pick at least one block').max(2000, 'blocks: at most 2,000'),
  method: z.enum(CLEANING_METHODS, { error: `method: one of ${CLEANING_METHODS.join(', ')}` }),
  notes: z.string().trim().max(2000, 'notes: at most 2,000 characters').optional(),
  /** When it was done (epoch ms); now when left out. Not in the future, not before 2000. */
  at: z.number().int().min(946_684_800_000, 'at: not before the year 2000').optional(),
})
export type CleaningInput = z.infer<typeof CleaningBody>
