import { DataTypes, type QueryInterface } from 'sequelize'

/**
 * users.session_version: sealed into every session cookie and compared on each request and WebSocket
 * message. Raising it ends every session of the account at once (sign-out, password change, disable,
 * role change), although the cookies themselves are still validly sealed.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.addColumn('users', 'session_version', { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 })
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.removeColumn('users', 'session_version')
}
