import { z } from './zod'

/** Route parameter `id`: a positive whole number. */
export const IdParams = z.object({
  id: z.coerce.number({ error: 'id is a number' }).int('id is a whole number').positive('id is a positive number'),
})
