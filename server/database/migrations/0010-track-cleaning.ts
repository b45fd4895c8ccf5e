import { DataTypes, type QueryInterface } from 'sequelize'

/**
 * Track cleaning: each cleaning names the blocks it covered (a block's counters start again from its latest
 * cleaning), and each layout has its thresholds for when a block is due.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.createTable('cleanings', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    layout_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'layouts', key: 'id' }, onDelete: 'CASCADE' },
    blocks: { type: DataTypes.ARRAY(DataTypes.STRING(64)), allowNull: false },
    method: { type: DataTypes.STRING(32), allowNull: false },
    notes: { type: DataTypes.TEXT, allowNull: true },
    done_at: { type: DataTypes.DATE, allowNull: false },
    done_by: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  })
  await qi.addIndex('cleanings', ['layout_id', 'done_at'], { name: 'cleanings_layout_done' })
  await qi.createTable('cleaning_thresholds', {
    layout_id: { type: DataTypes.INTEGER, primaryKey: true, references: { model: 'layouts', key: 'id' }, onDelete: 'CASCADE' },
    passages: { type: DataTypes.INTEGER, allowNull: true },
    occupied_hours: { type: DataTypes.INTEGER, allowNull: true },
    dropouts: { type: DataTypes.INTEGER, allowNull: true },
    days: { type: DataTypes.INTEGER, allowNull: true },
    updated_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  })
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.dropTable('cleaning_thresholds')
  await qi.dropTable('cleanings')
}
