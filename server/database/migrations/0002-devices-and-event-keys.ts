import { DataTypes, type QueryInterface } from 'sequelize'

/**
 * Devices: the controllers allowed on the MQTT broker (username + password hash).
 * events.entry_key: a key made by the writer for each journal entry, unique, so a batch written again after
 * a lost acknowledgement never stores an entry twice.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.createTable('devices', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    username: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(80), allowNull: false },
    layout_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'layouts', key: 'id' }, onDelete: 'CASCADE' },
    password_hash: { type: DataTypes.STRING(255), allowNull: false },
    disabled_at: { type: DataTypes.DATE, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  })
  await qi.addColumn('events', 'entry_key', { type: DataTypes.STRING(64), allowNull: true })
  await qi.addIndex('events', ['entry_key'], { unique: true, name: 'events_entry_key' })
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.removeIndex('events', 'events_entry_key')
  await qi.removeColumn('events', 'entry_key')
  await qi.dropTable('devices')
}
