// Errors that mean PostgreSQL cannot be reached just now (stopped, restarting, network cut, pool exhausted),
// as opposed to a fault in a query.
const AWAY_NAMES = /^Sequelize(Connection\w*|HostNotFound|HostNotReachable|InvalidConnection)Error$/
// PostgreSQL 15 documentation, Appendix A (error codes): class 57 operator intervention, 08 connection exception.
const AWAY_CODES = new Set(['57P01', '57P02', '57P03', '08000', '08001', '08003', '08006', 'ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EPIPE'])

export const DATABASE_AWAY_MESSAGE = 'The database is not reachable just now. Nothing was changed; try again in a moment.'

export function isDatabaseAway(error: unknown): boolean {
  for (let e = error as { name?: string, code?: string, message?: string, cause?: unknown, original?: unknown, parent?: unknown } | undefined, depth = 0; e && depth < 6; depth++) {
    if (e.name && AWAY_NAMES.test(e.name)) return true
    if (e.code && AWAY_CODES.has(e.code)) return true
    if (typeof e.message === 'string' && /Connection terminated|connect ECONNREFUSED|the database system is (shutting down|starting up)/.test(e.message)) return true
    e = (e.original ?? e.parent ?? e.cause) as typeof e
  }
  return false
}
