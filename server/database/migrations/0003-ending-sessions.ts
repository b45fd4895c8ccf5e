import { DataTypes, type QueryInterface } from 'sequelize'

/**
 * Ending sessions whose cookies are still validly sealed:
 * - users.session_version is sealed into every session and compared on each request and WebSocket
 *   message; raising it ends every session of the account (sign out everywhere, password change, disable,
 *   role change).
 * - ended_sessions lists single sessions ended by signing out, until they would have expired anyway.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.addColumn('users', 'session_version', { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 })
  await qi.createTable('ended_sessions', {
    id: { type: DataTypes.STRING(64), primaryKey: true },
    user_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
    ended_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  })
  await qi.addIndex('ended_sessions', ['ended_at'], { name: 'ended_sessions_ended_at' })
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.dropTable('ended_sessions')
  await qi.removeColumn('users', 'session_version')
}
