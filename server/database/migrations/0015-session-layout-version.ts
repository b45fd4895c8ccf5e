import { DataTypes, type QueryInterface } from 'sequelize'

/**
 * operating_sessions.layout_version: the layout version a session ran on (no other version can be made current
 * while it runs), so its review and replay draw that version even after the layout is edited. Sessions from
 * before this column get it only where no version of their layout was saved after they started (then the
 * current one is the one they ran on); the others stay NULL: not known.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.addColumn('operating_sessions', 'layout_version', { type: DataTypes.INTEGER, allowNull: true })
  await qi.sequelize.query(`UPDATE operating_sessions s SET layout_version = l.version FROM layouts l
    WHERE l.id = s.layout_id AND NOT EXISTS (SELECT 1 FROM layout_versions v WHERE v.layout_id = s.layout_id AND v.created_at > s.started_at)`)
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.removeColumn('operating_sessions', 'layout_version')
}
