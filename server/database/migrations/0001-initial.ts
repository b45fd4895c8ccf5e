import { DataTypes, type QueryInterface } from 'sequelize'

/** Users, layouts with their version history, operating sessions and the event journal. */
export async function up({ context: qi }: { context: QueryInterface }) {
  const now = { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW }
  await qi.createTable('users', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    email: { type: DataTypes.STRING(254), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(80), allowNull: false },
    role: { type: DataTypes.STRING(16), allowNull: false },
    password_hash: { type: DataTypes.STRING(255), allowNull: false },
    disabled_at: { type: DataTypes.DATE, allowNull: true },
    created_at: now,
    updated_at: now,
  })
  await qi.sequelize.query(`ALTER TABLE users ADD CONSTRAINT users_role_check CHECK (role IN ('admin','signaller','viewer'))`)

  await qi.createTable('layouts', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    slug: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(120), allowNull: false },
    definition: { type: DataTypes.JSONB, allowNull: false },
    version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
    created_at: now,
    updated_at: now,
  })

  await qi.createTable('layout_versions', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    layout_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'layouts', key: 'id' }, onDelete: 'CASCADE' },
    version: { type: DataTypes.INTEGER, allowNull: false },
    definition: { type: DataTypes.JSONB, allowNull: false },
    created_by: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    created_at: now,
  })
  await qi.addIndex('layout_versions', ['layout_id', 'version'], { unique: true, name: 'layout_versions_layout_version' })

  await qi.createTable('operating_sessions', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    layout_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'layouts', key: 'id' }, onDelete: 'CASCADE' },
    name: { type: DataTypes.STRING(120), allowNull: false },
    started_at: { type: DataTypes.DATE, allowNull: false },
    ended_at: { type: DataTypes.DATE, allowNull: true },
    started_by: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    fast_clock_ratio: { type: DataTypes.REAL, allowNull: false, defaultValue: 1 },
    fast_clock_start: { type: DataTypes.STRING(5), allowNull: true },
  })
  await qi.addIndex('operating_sessions', ['layout_id', 'started_at'], { name: 'operating_sessions_layout_started' })

  await qi.createTable('events', {
    id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
    layout_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'layouts', key: 'id' }, onDelete: 'CASCADE' },
    session_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'operating_sessions', key: 'id' }, onDelete: 'SET NULL' },
    at: { type: DataTypes.DATE, allowNull: false },
    type: { type: DataTypes.STRING(48), allowNull: false },
    subject: { type: DataTypes.STRING(64), allowNull: true },
    payload: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
    user_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
  })
  // Time-range pages of one layout's log, and everything of one operating session in order.
  await qi.addIndex('events', ['layout_id', 'at', 'id'], { name: 'events_layout_time' })
  await qi.addIndex('events', ['session_id', 'id'], { name: 'events_session' })
  await qi.addIndex('events', ['layout_id', 'type', 'at'], { name: 'events_layout_type_time' })
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.dropTable('events')
  await qi.dropTable('operating_sessions')
  await qi.dropTable('layout_versions')
  await qi.dropTable('layouts')
  await qi.dropTable('users')
}
