import { z } from './zod'

const Name = z.string({ error: 'name: a layout name is required' }).trim().min(1, 'a layout name is required').max(120, 'a layout name is at most 120 characters')
const Version = z.number({ error: 'a version number is required' }).int('a version is a whole number').positive('a version is a positive number')

/** POST /api/layouts: a blank layout (no definition), or the given one (checked by validateLayout). */
export const CreateLayoutBody = z.object({
  name: Name,
  definition: z.unknown().optional(),
  /** Copy the current version of this layout instead. */
  copyOf: z.number().int().positive().optional(),
})
export type CreateLayoutBody = z.infer<typeof CreateLayoutBody>

/**
 * PUT /api/layouts/:id: a new version based on `baseVersion`. It becomes current unless `draft` is set; a
 * draft may have validation errors, a current version may not.
 */
export const SaveLayoutBody = z.object({
  definition: z.unknown().refine(v => v !== undefined, 'a definition is required'),
  baseVersion: Version,
  draft: z.boolean().optional(),
})
export type SaveLayoutBody = z.infer<typeof SaveLayoutBody>

/** PATCH /api/layouts/:id: rename, archive or restore from the archive. */
export const UpdateLayoutBody = z.object({
  name: Name.optional(),
  archived: z.boolean().optional(),
}).refine(b => b.name !== undefined || b.archived !== undefined, 'give a name or archived')
export type UpdateLayoutBody = z.infer<typeof UpdateLayoutBody>

export const DuplicateLayoutBody = z.object({ name: Name })

export const RestoreVersionBody = z.object({ baseVersion: Version })

export const VersionParams = z.object({
  id: z.coerce.number({ error: 'id is a number' }).int('id is a whole number').positive('id is a positive number'),
  version: z.coerce.number({ error: 'version is a number' }).int('version is a whole number').positive('version is a positive number'),
})

export const WiringKind = z.enum(['detector', 'signal', 'turnout'])
/** PUT /api/layouts/:id/wiring: assign one item to a controller, or clear it (deviceId null). */
export const AssignWiringBody = z.object({
  kind: WiringKind,
  item: z.string().min(1).max(40),
  deviceId: z.number().int().positive().nullable(),
})
