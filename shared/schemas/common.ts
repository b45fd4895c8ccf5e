import { z } from './zod'

/** Route parameter `id`: a positive whole number, at most the largest `serial` id PostgreSQL can give. */
export const IdParams = z.object({
  id: z.coerce.number({ error: 'id is a number' }).int('id is a whole number').positive('id is a positive number')
    .max(2_147_483_647, 'id is at most 2,147,483,647'),
})
