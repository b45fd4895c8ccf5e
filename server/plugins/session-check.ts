// The browser learns whether it is signed in from nuxt-auth-utils' /api/_auth/session: a session whose
// account was disabled or whose session version has moved on is cleared there too, so the app shows the
// sign-in page instead of a screen whose every request answers 401. A database that cannot be reached
// leaves the session alone (the API answers 503 meanwhile).
export default defineNitroPlugin(() => {
  sessionHooks.hook('fetch', async (session, event) => {
    if (!session.user) return
    const row = await useDatabase().models.User.findByPk(session.user.id).catch(() => undefined)
    if (row === undefined || sessionMatches(session, row)) return
    await endSession(event)
    throw createError({ statusCode: 401, message: SESSION_ENDED_MESSAGE })
  })
})
