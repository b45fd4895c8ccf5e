import { z } from './zod'
import { ROLES } from '../utils/roles'

// Request bodies shared by the forms and the API routes.

export const emailField = z.string({ error: 'Enter an e-mail address' })
  .trim().toLowerCase()
  .max(254, 'An e-mail address has at most 254 characters')
  .pipe(z.email({ error: 'Enter a valid e-mail address' }))

export const passwordField = z.string({ error: 'Enter a password' })
  .min(10, 'A password has at least 10 characters')
  .max(200, 'A password has at most 200 characters')

export const nameField = z.string({ error: 'Enter a name' })
  .trim().min(1, 'Enter a name').max(80, 'A name has at most 80 characters')

export const roleField = z.enum(ROLES, { error: `Choose a role: ${ROLES.join(', ')}` })

export const SignInBody = z.object({
  email: emailField,
  password: z.string({ error: 'Enter your password' }).min(1, 'Enter your password').max(200, 'A password has at most 200 characters'),
})
export type SignInBody = z.infer<typeof SignInBody>

export const SignOutBody = z.object({
  everywhere: z.boolean({ error: 'Give true or false' }).optional(),
})
export type SignOutBody = z.infer<typeof SignOutBody>

export const ChangePasswordBody = z.object({
  currentPassword: z.string({ error: 'Enter your current password' }).min(1, 'Enter your current password').max(200, 'A password has at most 200 characters'),
  newPassword: passwordField,
})
export type ChangePasswordBody = z.infer<typeof ChangePasswordBody>

export const CreateUserBody = z.object({
  email: emailField,
  name: nameField,
  role: roleField,
  password: passwordField,
})
export type CreateUserBody = z.infer<typeof CreateUserBody>

export const UpdateUserBody = z.object({
  name: nameField.optional(),
  role: roleField.optional(),
  disabled: z.boolean({ error: 'disabled is true or false' }).optional(),
}).refine(body => Object.values(body).some(v => v !== undefined), { error: 'Give at least one of name, role, disabled' })
export type UpdateUserBody = z.infer<typeof UpdateUserBody>
