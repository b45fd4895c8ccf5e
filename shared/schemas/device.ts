import { z } from './zod'
import { nameField, passwordField } from './account'

/** An MQTT sign-in for a controller on the layout (detector board, signal decoder, the fake layout). */
export const CreateDeviceBody = z.object({
  username: z.string({ error: 'Enter a username' }).trim()
    .regex(/^[a-z0-9][a-z0-9._-]{1,63}$/, 'A username is 2-64 lower-case letters, digits, ".", "_" or "-"'),
  name: nameField,
  password: passwordField,
})
export type CreateDeviceBody = z.infer<typeof CreateDeviceBody>

export const UpdateDeviceBody = z.object({
  disabled: z.boolean({ error: 'disabled is true or false' }).optional(),
  password: passwordField.optional(),
}).refine(body => body.disabled !== undefined || body.password !== undefined, { error: 'Give disabled or password' })
export type UpdateDeviceBody = z.infer<typeof UpdateDeviceBody>

export interface DeviceView { id: number, username: string, name: string, disabled: boolean, createdAt: string }
