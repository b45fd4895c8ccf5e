import { DataTypes, type QueryInterface } from 'sequelize'

/**
 * Layouts owners edit themselves.
 * - layouts.archived_at: an archived layout keeps its journal but does not run and is not offered on the Panel.
 * - layouts.latest_version: the newest saved version (drafts included); `version` stays the current one (the
 *   version that runs). A save names the version it was based on and is refused when it is not the latest.
 * - layout_versions.summary: what the save changed, counted by kind; valid: whether it passed validateLayout.
 * - layout_wiring: which controller (device) each detector, signal and turnout of a layout is wired to.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.addColumn('layouts', 'archived_at', { type: DataTypes.DATE, allowNull: true })
  await qi.addColumn('layouts', 'latest_version', { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 })
  await qi.sequelize.query('UPDATE layouts SET latest_version = GREATEST(version, COALESCE((SELECT max(version) FROM layout_versions v WHERE v.layout_id = layouts.id), 1))')
  await qi.addColumn('layout_versions', 'summary', { type: DataTypes.JSONB, allowNull: false, defaultValue: {} })
  await qi.addColumn('layout_versions', 'valid', { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true })
  await qi.createTable('layout_wiring', {
    layout_id: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: 'layouts', key: 'id' }, onDelete: 'CASCADE' },
    kind: { type: DataTypes.STRING(16), allowNull: false, primaryKey: true },
    item_id: { type: DataTypes.STRING(40), allowNull: false, primaryKey: true },
    device_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'devices', key: 'id' }, onDelete: 'CASCADE' },
  })
  await qi.sequelize.query(`ALTER TABLE layout_wiring ADD CONSTRAINT layout_wiring_kind_check CHECK (kind IN ('detector','signal','turnout'))`)
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.dropTable('layout_wiring')
  await qi.removeColumn('layout_versions', 'valid')
  await qi.removeColumn('layout_versions', 'summary')
  await qi.removeColumn('layouts', 'latest_version')
  await qi.removeColumn('layouts', 'archived_at')
}
