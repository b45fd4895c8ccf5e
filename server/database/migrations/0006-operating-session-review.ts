import { DataTypes, type QueryInterface } from 'sequelize'

/**
 * Running and reviewing operating sessions.
 * - At most one running session per layout, enforced here (a partial unique index), so two simultaneous
 *   starts cannot both win.
 * - session_checkpoints: the layout's state at points of a session, so a replay folds only the events after
 *   the nearest one.
 * - Indexes for the review's filters, partial on session_id so events outside a session cost nothing more.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.addColumn('operating_sessions', 'notes', { type: DataTypes.TEXT, allowNull: true })
  await qi.addColumn('operating_sessions', 'ended_by', { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' })
  await qi.sequelize.query(`CREATE UNIQUE INDEX operating_sessions_one_running ON operating_sessions (layout_id) WHERE ended_at IS NULL`)
  await qi.sequelize.query(`ALTER TABLE operating_sessions ADD CONSTRAINT operating_sessions_ratio_check CHECK (fast_clock_ratio > 0 AND fast_clock_ratio <= 60)`)

  await qi.createTable('session_checkpoints', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    session_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'operating_sessions', key: 'id' }, onDelete: 'CASCADE' },
    // The last event folded into this state (0: the state when the session started, before any of its events).
    event_id: { type: DataTypes.BIGINT, allowNull: false },
    at: { type: DataTypes.DATE, allowNull: false },
    events_folded: { type: DataTypes.INTEGER, allowNull: false },
    state: { type: DataTypes.JSONB, allowNull: false },
  })
  await qi.addIndex('session_checkpoints', ['session_id', 'event_id'], { unique: true, name: 'session_checkpoints_session_event' })
  await qi.addIndex('session_checkpoints', ['session_id', 'at'], { name: 'session_checkpoints_session_at' })

  await qi.sequelize.query(`CREATE INDEX events_session_type ON events (session_id, type, id) WHERE session_id IS NOT NULL`)
  await qi.sequelize.query(`CREATE INDEX events_session_subject ON events (session_id, subject, id) WHERE session_id IS NOT NULL`)
  await qi.sequelize.query(`CREATE INDEX events_session_user ON events (session_id, user_id, id) WHERE session_id IS NOT NULL AND user_id IS NOT NULL`)
  await qi.sequelize.query(`CREATE INDEX events_session_description ON events (session_id, (COALESCE(payload->>'description', payload#>>'{alarm,description}')), id) WHERE session_id IS NOT NULL`)
  await qi.sequelize.query(`CREATE INDEX events_session_time ON events (session_id, at, id) WHERE session_id IS NOT NULL`)
}

export async function down({ context: qi }: { context: QueryInterface }) {
  for (const name of ['events_session_time', 'events_session_description', 'events_session_user', 'events_session_subject', 'events_session_type']) {
    await qi.sequelize.query(`DROP INDEX IF EXISTS ${name}`)
  }
  await qi.dropTable('session_checkpoints')
  await qi.sequelize.query(`ALTER TABLE operating_sessions DROP CONSTRAINT IF EXISTS operating_sessions_ratio_check`)
  await qi.sequelize.query(`DROP INDEX IF EXISTS operating_sessions_one_running`)
  await qi.removeColumn('operating_sessions', 'ended_by')
  await qi.removeColumn('operating_sessions', 'notes')
}
