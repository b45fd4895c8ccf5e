import { z } from 'zod'
import { emailField, nameField, passwordField, roleField } from './account'

// Request bodies of invitations and password resets, shared by the forms and the API routes.

export const tokenField = z.string({ error: 'This link is not complete: open it again from the e-mail' })
  .trim().min(20, 'This link is not complete: open it again from the e-mail')
  .max(200, 'This link is not complete: open it again from the e-mail')

export const InviteBody = z.object({ email: emailField, role: roleField })
export type InviteBody = z.infer<typeof InviteBody>

export const TokenBody = z.object({ token: tokenField })
export type TokenBody = z.infer<typeof TokenBody>

export const AcceptInvitationBody = z.object({ token: tokenField, name: nameField, password: passwordField })
export type AcceptInvitationBody = z.infer<typeof AcceptInvitationBody>

export const ForgotPasswordBody = z.object({ email: emailField })
export type ForgotPasswordBody = z.infer<typeof ForgotPasswordBody>

export const ResetPasswordBody = z.object({ token: tokenField, password: passwordField })
export type ResetPasswordBody = z.infer<typeof ResetPasswordBody>
