import type { H3Event } from 'h3'
import { passwordChangedMail, passwordResetMail } from '../mail/templates'
import type { ForgotPasswordBody, ResetPasswordBody } from '#shared/schemas/mail'

export const RESET_LIFETIME_MS = 3_600_000

/** The one answer to every forgotten-password request, whether or not the address has an account. */
export const FORGOT_ANSWER = 'If that address belongs to a Blockbell account, a link to choose a new password is on its way. It works for one hour.'

const forgotThrottle = createForgotThrottle()

/** Queues a reset link for an active account; does nothing visible otherwise (same answer either way). */
export async function requestPasswordReset(event: H3Event, { email }: ForgotPasswordBody): Promise<void> {
  const wait = forgotThrottle.take(email, getRequestIP(event) ?? 'unknown')
  if (wait > 0) {
    setResponseHeader(event, 'Retry-After', wait)
    const minutes = Math.ceil(wait / 60)
    throw createError({ statusCode: 429, message: `Too many requests for a new password. Try again in ${minutes} minute${minutes === 1 ? '' : 's'}.` })
  }
  const { sequelize, models } = useDatabase()
  const user = await models.User.findOne({ where: { email, disabledAt: null } })
  if (!user) return
  const { token, hash } = newOneTimeToken()
  const expiresAt = new Date(Date.now() + RESET_LIFETIME_MS)
  await sequelize.transaction(async (transaction) => {
    await models.PasswordReset.create({ userId: user.id, tokenHash: hash, expiresAt }, { transaction })
    const mail = passwordResetMail({ name: user.name, link: publicLink(`/reset-password/${token}`), expiresAt, publicUrl: useMailSettings().publicUrl })
    await queueMail({ kind: 'password-reset', to: user.email, ...mail }, transaction)
  })
}

/** Sets the new password with a one-time link, uses up every open link of the account, and sends a notice. */
export async function resetPassword({ token, password }: ResetPasswordBody): Promise<void> {
  const { sequelize, models } = useDatabase()
  const passwordHash = await hashPassword(password)
  const userId = await sequelize.transaction(async (transaction) => {
    const reset = await models.PasswordReset.findOne({ where: { tokenHash: hashOneTimeToken(token) }, lock: transaction.LOCK.UPDATE, transaction })
    if (!reset) throw createError({ statusCode: 410, message: 'This reset link is not known. Ask for a new one on the sign-in page.' })
    if (reset.usedAt) throw createError({ statusCode: 410, message: 'This reset link has already been used. Ask for a new one on the sign-in page.' })
    if (reset.expiresAt.getTime() <= Date.now()) throw createError({ statusCode: 410, message: 'This reset link has expired (links work for one hour). Ask for a new one on the sign-in page.' })
    const user = await models.User.findByPk(reset.userId, { lock: transaction.LOCK.UPDATE, transaction })
    if (!user || user.disabledAt) throw createError({ statusCode: 410, message: 'This account has been disabled. Ask an admin to enable it again.' })
    const now = new Date()
    await user.update({ passwordHash }, { transaction })
    await models.PasswordReset.update({ usedAt: now }, { where: { userId: user.id, usedAt: null }, transaction })
    const mail = passwordChangedMail({ name: user.name, at: now, signInUrl: publicLink('/sign-in'), publicUrl: useMailSettings().publicUrl })
    await queueMail({ kind: 'password-changed', to: user.email, ...mail }, transaction)
    return user.id
  })
  // signs the account out everywhere: every session made before the reset stops working at once
  await bumpSessionVersion(userId)
}
