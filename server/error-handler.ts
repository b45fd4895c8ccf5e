import type { NitroErrorHandler } from 'nitropack'

// Runs before Nuxt's own error handler. A request that failed because PostgreSQL is away answers
// 503 with a plain message (and Retry-After) instead of an anonymous 500; everything else passes on.
const handleDatabaseAway: NitroErrorHandler = async (error, event) => {
  if (!isDatabaseAway(error)) return
  console.error(`[blockbell] ${event.method} ${event.path}: database not reachable (${error.message})`)
  setResponseHeader(event, 'Retry-After', 5)
  if (event.path.startsWith('/api/')) {
    setResponseStatus(event, 503, 'Service Unavailable')
    setResponseHeader(event, 'Content-Type', 'application/json')
    await send(event, JSON.stringify({ statusCode: 503, statusMessage: 'Service Unavailable', message: DATABASE_AWAY_MESSAGE }))
    return
  }
  // A page: Nuxt's handler renders its error page with this status and message.
  Object.assign(error, { statusCode: 503, statusMessage: 'Service Unavailable', message: DATABASE_AWAY_MESSAGE, unhandled: false })
}

export default handleDatabaseAway
