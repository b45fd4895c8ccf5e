import { DataTypes, type QueryInterface } from 'sequelize'

/**
 * outbox: every e-mail Blockbell sends, written before it is sent, so a send survives a restart; the
 * dispatcher retries with backoff and marks what could not be delivered as failed.
 * invitations / password_resets: one-time links; only a SHA-256 of each token is stored.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.createTable('outbox', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    kind: { type: DataTypes.STRING(32), allowNull: false },
    to_address: { type: DataTypes.STRING(254), allowNull: false },
    subject: { type: DataTypes.STRING(200), allowNull: false },
    text: { type: DataTypes.TEXT, allowNull: false },
    html: { type: DataTypes.TEXT, allowNull: false },
    state: { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'queued' },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    next_attempt_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
    last_error: { type: DataTypes.TEXT, allowNull: true },
    sent_at: { type: DataTypes.DATE, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  })
  await qi.sequelize.query(`ALTER TABLE outbox ADD CONSTRAINT outbox_state_check CHECK (state IN ('queued', 'sent', 'kept', 'failed'))`)
  await qi.addIndex('outbox', ['state', 'next_attempt_at'], { name: 'outbox_due' })
  await qi.addIndex('outbox', ['created_at', 'id'], { name: 'outbox_newest' })

  await qi.createTable('invitations', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    email: { type: DataTypes.STRING(254), allowNull: false },
    role: { type: DataTypes.STRING(16), allowNull: false },
    token_hash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    invited_by: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    outbox_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'outbox', key: 'id' }, onDelete: 'SET NULL' },
    expires_at: { type: DataTypes.DATE, allowNull: false },
    accepted_at: { type: DataTypes.DATE, allowNull: true },
    accepted_user_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    revoked_at: { type: DataTypes.DATE, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  })
  await qi.sequelize.query(`ALTER TABLE invitations ADD CONSTRAINT invitations_role_check CHECK (role IN ('viewer', 'signaller', 'admin'))`)
  // One open invitation per address: two admins inviting at once cannot both succeed.
  await qi.sequelize.query(`CREATE UNIQUE INDEX invitations_open_email ON invitations (email) WHERE accepted_at IS NULL AND revoked_at IS NULL`)

  await qi.createTable('password_resets', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    user_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
    token_hash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    expires_at: { type: DataTypes.DATE, allowNull: false },
    used_at: { type: DataTypes.DATE, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  })
  await qi.addIndex('password_resets', ['user_id'], { name: 'password_resets_user' })
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.dropTable('password_resets')
  await qi.dropTable('invitations')
  await qi.dropTable('outbox')
}
