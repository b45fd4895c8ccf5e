import { DataTypes, type QueryInterface } from 'sequelize'

/**
 * Several server processes, one writer per layout: `layout_owners.epoch` is bumped each time a process
 * takes a layout over, and every journal entry written by a layout's owner carries the epoch it wrote
 * under (`events.owner_epoch`; null from a process that runs alone), so writes of a former owner are refused.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.createTable('layout_owners', {
    layout_id: { type: DataTypes.INTEGER, primaryKey: true, references: { model: 'layouts', key: 'id' }, onDelete: 'CASCADE' },
    epoch: { type: DataTypes.BIGINT, allowNull: false, defaultValue: 0 },
    instance: { type: DataTypes.STRING(128), allowNull: true },
    taken_at: { type: DataTypes.DATE, allowNull: true },
  })
  await qi.addColumn('events', 'owner_epoch', { type: DataTypes.BIGINT, allowNull: true })
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.removeColumn('events', 'owner_epoch')
  await qi.dropTable('layout_owners')
}
