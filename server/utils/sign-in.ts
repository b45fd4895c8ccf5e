import type { H3Event } from 'h3'
import type { User as SessionUser } from '#auth-utils'
import type { SignInBody, SignOutBody } from '#shared/schemas/account'

let dummyHash: Promise<string> | undefined

/** Checks e-mail and password, with throttling of repeated failures, and opens a sealed cookie session. */
export async function signIn(event: H3Event, { email, password }: SignInBody): Promise<SessionUser> {
  const client = clientAddress(event)
  const wait = signInRetryAfter(email, client)
  if (wait > 0) {
    setResponseHeader(event, 'Retry-After', wait)
    const minutes = Math.ceil(wait / 60)
    throw createError({ statusCode: 429, message: `Too many failed sign-ins. Try again in ${minutes} minute${minutes === 1 ? '' : 's'}.` })
  }
  const row = await useDatabase().models.User.findOne({ where: { email } })
  // Verify against a throwaway hash when the account does not exist, so both answers take as long.
  dummyHash ??= hashPassword('not-a-real-password')
  const ok = await verifyPassword(row?.passwordHash ?? await dummyHash, password)
  if (!row || !ok) {
    recordSignInFailure(email, client)
    throw createError({ statusCode: 401, message: 'Wrong e-mail address or password.' })
  }
  if (row.disabledAt) throw createError({ statusCode: 403, message: 'This account has been disabled. Ask an admin to enable it again.' })
  clearSignInFailures(email, client)
  return openSession(event, row)
}

/**
 * Signs out this session, or with `everywhere` every session of the account (the session version is
 * raised: other tablets and browsers are signed out at their next request, their panels at once).
 */
export async function signOut(event: H3Event, { everywhere }: SignOutBody): Promise<void> {
  const session = await getUserSession(event)
  if (session.user) {
    if (everywhere) await bumpSessionVersion(session.user.id)
    else if (session.id) await endOneSession(session.id, session.user.id)
  }
  await endSession(event)
}
