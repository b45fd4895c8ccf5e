// The browser learns whether it is signed in from nuxt-auth-utils' /api/_auth/session: a session that no
// longer stands (signed out, account disabled, session version raised) is cleared there too, so the app
// shows the sign-in page instead of a screen whose every request answers 401. A database that cannot be
// reached leaves the session alone (the API answers 503 meanwhile).
export default defineNitroPlugin(() => {
  sessionHooks.hook('fetch', async (session, event) => {
    if (!session.user) return
    const check = await checkSession(session).catch(() => null)
    if (!check || check.current) return
    await endSession(event)
    throw createError({ statusCode: 401, message: SESSION_ENDED_MESSAGE })
  })
})
