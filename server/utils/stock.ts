import { createError } from 'h3'
import { QueryTypes, type Sequelize } from 'sequelize'
import { stockDueState, stockRunning, type DescriptionEntry } from '#shared/maintenance/stock'
import type { StockInput } from '#shared/schemas/maintenance'
import type { StockItem, StockService } from '#shared/types/maintenance'
import { missingUploadIds, uploadedPhoto } from './upload-records'

interface LayoutLengths { blocks?: { id: string, lengthMm?: number }[], scale?: { name?: string, ratio?: number } }

interface ItemRow {
  id: number
  name: string
  number: string | null
  notes: string | null
  photo: string | null
  service_hours: string | null
  service_km: string | null
  description: string | null
  last_serviced_at: Date | null
  services: number
}

const NOT_FOUND = (id: number) => createError({ statusCode: 404, message: `id: no stock item with id ${id}` })

/** The description entries of a layout between two times that can start or end a berth of `description`. */
async function descriptionEntries(sequelize: Sequelize, layoutId: number, description: string, from: Date, to: Date): Promise<DescriptionEntry[]> {
  const rows = await sequelize.query<{ at: string, block: string, description: string | null }>(`
    SELECT (extract(epoch FROM at) * 1000)::bigint AS at, subject AS block, payload->>'description' AS description
    FROM events
    WHERE layout_id = :layoutId AND type = 'description' AND at >= :from AND at <= :to
      AND (payload->>'description' = :description OR payload->>'description' IS NULL OR payload->>'reason' = 'interpose')
    ORDER BY at, events.id
  `, { replacements: { layoutId, description, from, to }, type: QueryTypes.SELECT })
  return rows.map(r => ({ at: Number(r.at), block: r.block, description: r.description }))
}

/** Running of one item since its last service (or ever): every window it ran under a description, added up. */
async function runningSince(sequelize: Sequelize, layoutId: number, item: ItemRow, definition: LayoutLengths, now: Date) {
  const since = item.last_serviced_at?.getTime() ?? -Infinity
  const runs = await sequelize.query<{ description: string, from_at: Date, to_at: Date | null }>(
    'SELECT description, from_at, to_at FROM stock_runs WHERE stock_id = :id AND (to_at IS NULL OR to_at > :since) ORDER BY from_at',
    { replacements: { id: item.id, since: new Date(Number.isFinite(since) ? since : 0) }, type: QueryTypes.SELECT })
  const lengths = Object.fromEntries((definition.blocks ?? []).map(b => [b.id, b.lengthMm ?? 0]))
  const ratio = definition.scale?.ratio ?? 1
  const total = { passages: 0, seconds: 0, scaleMetres: 0 }
  for (const run of runs) {
    const window = { from: Math.max(run.from_at.getTime(), since), to: Math.min(run.to_at?.getTime() ?? now.getTime(), now.getTime()) }
    if (window.to <= window.from) continue
    const entries = await descriptionEntries(sequelize, layoutId, run.description, new Date(window.from), new Date(window.to))
    const r = stockRunning(entries, run.description, window, lengths, ratio)
    total.passages += r.passages
    total.seconds += r.seconds
    total.scaleMetres += r.scaleMetres
  }
  return total
}

/** The roster of a layout, each item with its running since its last service and its due state. */
export async function listStock(sequelize: Sequelize, layoutId: number, definition: LayoutLengths, now = new Date()): Promise<StockItem[]> {
  const rows = await sequelize.query<ItemRow>(`
    SELECT s.id, s.name, s.number, s.notes, s.photo::text AS photo, s.service_hours, s.service_km,
      (SELECT r.description FROM stock_runs r WHERE r.stock_id = s.id AND r.to_at IS NULL) AS description,
      (SELECT max(v.done_at) FROM stock_services v WHERE v.stock_id = s.id) AS last_serviced_at,
      (SELECT count(*)::int FROM stock_services v WHERE v.stock_id = s.id) AS services
    FROM stock_items s WHERE s.layout_id = :layoutId ORDER BY s.name, s.id
  `, { replacements: { layoutId }, type: QueryTypes.SELECT })
  const items: StockItem[] = []
  for (const row of rows) {
    const running = await runningSince(sequelize, layoutId, row, definition, now)
    const interval = { hours: row.service_hours === null ? null : Number(row.service_hours), km: row.service_km === null ? null : Number(row.service_km) }
    const verdict = stockDueState(running, interval)
    items.push({
      id: row.id, name: row.name, number: row.number, notes: row.notes, photo: row.photo ? uploadedPhoto(row.photo) : null,
      serviceHours: interval.hours, serviceKm: interval.km, description: row.description,
      lastServicedAt: row.last_serviced_at?.toISOString() ?? null, serviceCount: row.services, ...running, state: verdict.state, reasons: verdict.reasons,
    })
  }
  return items
}

async function checkPhoto(sequelize: Sequelize, photo: string | null | undefined) {
  if (photo && (await missingUploadIds(sequelize, [photo])).length) throw createError({ statusCode: 400, message: `photo: no uploaded photo ${photo}` })
}

export async function createStockItem(sequelize: Sequelize, layoutId: number, input: StockInput): Promise<number> {
  await checkPhoto(sequelize, input.photo)
  const [row] = await sequelize.query<{ id: number }>(`
    INSERT INTO stock_items (layout_id, name, number, notes, photo, service_hours, service_km)
    VALUES (:layoutId, :name, :number, :notes, :photo, :hours, :km) RETURNING id
  `, { replacements: { layoutId, name: input.name, number: input.number || null, notes: input.notes || null, photo: input.photo ?? null, hours: input.serviceHours, km: input.serviceKm }, type: QueryTypes.SELECT })
  return row!.id
}

export async function updateStockItem(sequelize: Sequelize, id: number, input: StockInput): Promise<void> {
  await checkPhoto(sequelize, input.photo)
  const [, count] = await sequelize.query(`
    UPDATE stock_items SET name = :name, number = :number, notes = :notes, photo = :photo, service_hours = :hours, service_km = :km WHERE id = :id
  `, { replacements: { id, name: input.name, number: input.number || null, notes: input.notes || null, photo: input.photo ?? null, hours: input.serviceHours, km: input.serviceKm }, type: QueryTypes.UPDATE })
  if (!count) throw NOT_FOUND(id)
}

/**
 * Removes an item from the roster for good, with its service records and the train descriptions it ran under
 * (both cascade). The journal keeps its own description entries: they never named the item. Its photo stays
 * in the uploads, as a cleaning's do.
 */
export async function deleteStockItem(sequelize: Sequelize, id: number): Promise<{ services: number }> {
  const [row] = await sequelize.query<{ services: number }>(`
    WITH gone AS (DELETE FROM stock_items WHERE id = :id RETURNING id)
    SELECT (SELECT count(*)::int FROM stock_services v WHERE v.stock_id IN (SELECT id FROM gone)) AS services FROM gone
  `, { replacements: { id }, type: QueryTypes.SELECT })
  if (!row) throw NOT_FOUND(id)
  return { services: row.services }
}

/** The layout a stock item belongs to; 404 when there is no such item. */
export async function stockLayoutId(sequelize: Sequelize, id: number): Promise<number> {
  const [row] = await sequelize.query<{ layout_id: number }>('SELECT layout_id FROM stock_items WHERE id = :id', { replacements: { id }, type: QueryTypes.SELECT })
  if (!row) throw NOT_FOUND(id)
  return row.layout_id
}

/** From now the item runs under `description` (or under none): the open run ends, a new one starts. */
export async function setStockDescription(sequelize: Sequelize, id: number, description: string | null, now = new Date()): Promise<void> {
  await stockLayoutId(sequelize, id)
  await sequelize.transaction(async (transaction) => {
    // the item's row lock makes two changes at once queue up instead of both opening a run
    await sequelize.query('SELECT id FROM stock_items WHERE id = :id FOR UPDATE', { replacements: { id }, transaction })
    const [open] = await sequelize.query<{ description: string }>('SELECT description FROM stock_runs WHERE stock_id = :id AND to_at IS NULL', { replacements: { id }, transaction, type: QueryTypes.SELECT })
    if ((open?.description ?? null) === description) return
    await sequelize.query('UPDATE stock_runs SET to_at = greatest(:now, from_at) WHERE stock_id = :id AND to_at IS NULL', { replacements: { id, now }, transaction })
    if (description !== null) {
      await sequelize.query('INSERT INTO stock_runs (stock_id, description, from_at) VALUES (:id, :description, :now)', { replacements: { id, description, now }, transaction })
    }
  })
}

export async function recordStockService(sequelize: Sequelize, id: number, note: string | undefined, userId: number, now = new Date()): Promise<number> {
  await stockLayoutId(sequelize, id)
  const [row] = await sequelize.query<{ id: number }>(
    'INSERT INTO stock_services (stock_id, done_at, done_by, note) VALUES (:id, :now, :userId, :note) RETURNING id',
    { replacements: { id, now, userId, note: note || null }, type: QueryTypes.SELECT })
  return row!.id
}

export async function listStockServices(sequelize: Sequelize, id: number): Promise<StockService[]> {
  await stockLayoutId(sequelize, id)
  const rows = await sequelize.query<{ id: number, done_at: Date, name: string | null, note: string | null }>(`
    SELECT v.id, v.done_at, u.name, v.note FROM stock_services v LEFT JOIN users u ON u.id = v.done_by
    WHERE v.stock_id = :id ORDER BY v.done_at DESC, v.id DESC LIMIT 100
  `, { replacements: { id }, type: QueryTypes.SELECT })
  return rows.map(r => ({ id: r.id, at: r.done_at.toISOString(), by: r.name, note: r.note }))
}
