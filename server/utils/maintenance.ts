import { createError } from 'h3'
import { QueryTypes, type Sequelize } from 'sequelize'
import { DEFAULT_THRESHOLDS, dueState, type CleaningThresholds } from '#shared/maintenance/due'
import type { CleaningInput, ThresholdsInput } from '#shared/schemas/maintenance'
import type { BlockMaintenance, CleaningRecord } from '#shared/types/maintenance'
import { missingUploadIds, uploadedPhoto } from './upload-records'

interface UseRow { block: string, passages: string, occupied_seconds: string | null, dropouts: string, cleaned_at: Date | null }

type BlockUseCounts = Map<string, { passages: number, occupiedSeconds: number, dropouts: number, lastCleanedAt: Date | null }>

function toBlockUse(rows: UseRow[]): BlockUseCounts {
  return new Map(rows.map(r => [r.block, {
    passages: Number(r.passages), occupiedSeconds: Math.round(Number(r.occupied_seconds ?? 0)), dropouts: Number(r.dropouts), lastCleanedAt: r.cleaned_at,
  }]))
}

/**
 * Each block's use since its latest cleaning, read from the running tallies PostgreSQL keeps as journal rows
 * are written (migration 0012): one row per block, whatever the journal's size. Passages are block events that
 * became occupied; occupied time runs from each of those to the block's next event (or now, or from the
 * cleaning for a train standing there then); dropouts are the detector dropouts recorded for it.
 */
export async function blockUse(sequelize: Sequelize, layoutId: number, now: Date = new Date()): Promise<BlockUseCounts> {
  const rows = await sequelize.query<UseRow>(`
    SELECT block, passages, dropouts, since AS cleaned_at,
      clear_epochs - occupied_epochs
        - CASE WHEN first_clear < coalesce(first_occupied, 'infinity'::timestamptz)
            THEN extract(epoch FROM coalesce(since, first_clear)) ELSE 0 END
        + CASE WHEN last_occupied > coalesce(last_clear, '-infinity'::timestamptz)
            THEN extract(epoch FROM greatest(:now, last_occupied)) ELSE 0 END AS occupied_seconds
    FROM block_tallies WHERE layout_id = :layoutId
  `, { replacements: { layoutId, now }, type: QueryTypes.SELECT })
  return toBlockUse(rows)
}

/**
 * The same counts made from the journal itself in one pass (no tally): the reference the tallies are checked
 * against in the tests and the benchmark. Nothing of the journal is loaded into memory.
 */
export async function blockUseFromJournal(sequelize: Sequelize, layoutId: number, now: Date = new Date()): Promise<BlockUseCounts> {
  const rows = await sequelize.query<UseRow>(`
    WITH cleaned AS (
      SELECT b.block, max(c.done_at) AS cleaned_at
      FROM cleanings c CROSS JOIN LATERAL unnest(c.blocks) AS b(block)
      WHERE c.layout_id = :layoutId
      GROUP BY b.block
    ),
    moves AS (
      SELECT e.subject AS block, e.at, (e.payload->>'occupied')::boolean AS occupied, c.cleaned_at
      FROM events e LEFT JOIN cleaned c ON c.block = e.subject
      WHERE e.layout_id = :layoutId AND e.type = 'block' AND e.at > coalesce(c.cleaned_at, '-infinity'::timestamptz)
    ),
    -- A block's moves alternate occupied / clear, so its time occupied is the sum of the clears' times less
    -- the sum of the occupieds' times (one pass, no sort), corrected at both ends of the window: a first clear
    -- belongs to a train already there at the cleaning, a last occupied to a train still there now.
    sums AS (
      SELECT block, count(*) FILTER (WHERE occupied) AS passages,
             coalesce(sum(extract(epoch FROM at)) FILTER (WHERE NOT occupied), 0)
               - coalesce(sum(extract(epoch FROM at)) FILTER (WHERE occupied), 0) AS raw_seconds,
             min(at) FILTER (WHERE occupied) AS first_occupied, min(at) FILTER (WHERE NOT occupied) AS first_clear,
             max(at) FILTER (WHERE occupied) AS last_occupied, max(at) FILTER (WHERE NOT occupied) AS last_clear,
             max(cleaned_at) AS cleaned_at
      FROM moves GROUP BY block
    ),
    use AS (
      SELECT block, passages,
             raw_seconds
               - CASE WHEN first_clear < coalesce(first_occupied, 'infinity'::timestamptz)
                   THEN extract(epoch FROM coalesce(cleaned_at, first_clear)) ELSE 0 END
               + CASE WHEN last_occupied > coalesce(last_clear, '-infinity'::timestamptz)
                   THEN extract(epoch FROM greatest(:now, last_occupied)) ELSE 0 END AS occupied_seconds
      FROM sums
    ),
    drops AS (
      SELECT e.subject AS block, count(*) AS dropouts
      FROM events e LEFT JOIN cleaned c ON c.block = e.subject
      WHERE e.layout_id = :layoutId AND e.type = 'dropout' AND e.at > coalesce(c.cleaned_at, '-infinity'::timestamptz)
      GROUP BY e.subject
    ),
    blocks AS (SELECT block FROM use UNION SELECT block FROM drops UNION SELECT block FROM cleaned)
    SELECT b.block, coalesce(u.passages, 0) AS passages, u.occupied_seconds, coalesce(d.dropouts, 0) AS dropouts, c.cleaned_at
    FROM blocks b LEFT JOIN use u USING (block) LEFT JOIN drops d USING (block) LEFT JOIN cleaned c USING (block)
  `, { replacements: { layoutId, now }, type: QueryTypes.SELECT })
  return toBlockUse(rows)
}

export async function cleaningThresholds(sequelize: Sequelize, layoutId: number): Promise<CleaningThresholds> {
  const [row] = await sequelize.query<{ passages: number | null, occupied_hours: number | null, dropouts: number | null, days: number | null }>(
    'SELECT passages, occupied_hours, dropouts, days FROM cleaning_thresholds WHERE layout_id = :layoutId',
    { replacements: { layoutId }, type: QueryTypes.SELECT })
  return row ? { passages: row.passages, occupiedHours: row.occupied_hours, dropouts: row.dropouts, days: row.days } : { ...DEFAULT_THRESHOLDS }
}

export async function setCleaningThresholds(sequelize: Sequelize, layoutId: number, t: ThresholdsInput): Promise<CleaningThresholds> {
  await sequelize.query(`
    INSERT INTO cleaning_thresholds (layout_id, passages, occupied_hours, dropouts, days, updated_at)
    VALUES (:layoutId, :passages, :occupiedHours, :dropouts, :days, now())
    ON CONFLICT (layout_id) DO UPDATE SET passages = excluded.passages, occupied_hours = excluded.occupied_hours,
      dropouts = excluded.dropouts, days = excluded.days, updated_at = now()
  `, { replacements: { layoutId, ...t } })
  return cleaningThresholds(sequelize, layoutId)
}

interface LayoutBlocks { blocks?: { id: string, name?: string }[] }

/** Every block of the layout with its use and due state, most due first. */
export async function layoutMaintenance(sequelize: Sequelize, layoutId: number, definition: LayoutBlocks, now = new Date()) {
  const [use, thresholds] = await Promise.all([blockUse(sequelize, layoutId, now), cleaningThresholds(sequelize, layoutId)])
  const rows = (definition.blocks ?? []).map((b) => {
    const u = use.get(b.id) ?? { passages: 0, occupiedSeconds: 0, dropouts: 0, lastCleanedAt: null }
    const verdict = dueState({ ...u, lastCleanedAt: u.lastCleanedAt?.getTime() ?? null }, thresholds, now.getTime())
    const row: BlockMaintenance = {
      block: b.id, name: b.name ?? b.id, passages: u.passages, occupiedSeconds: u.occupiedSeconds, dropouts: u.dropouts,
      lastCleanedAt: u.lastCleanedAt?.toISOString() ?? null, state: verdict.state, reasons: verdict.reasons,
    }
    return { row, share: verdict.share }
  })
  rows.sort((a, b) => b.share - a.share || a.row.block.localeCompare(b.row.block))
  return { blocks: rows.map(r => r.row), thresholds }
}

/** Records a cleaning of blocks that exist on the layout; their counters start again from its time. */
export async function recordCleaning(sequelize: Sequelize, layoutId: number, definition: LayoutBlocks, input: CleaningInput, userId: number, now = Date.now()): Promise<number> {
  const known = new Set((definition.blocks ?? []).map(b => b.id))
  const unknown = input.blocks.filter(b => !known.has(b))
  if (unknown.length) throw createError({ statusCode: 400, message: `blocks: no block ${unknown.map(b => `"${b}"`).join(', ')} on this layout` })
  if (input.at !== undefined && input.at > now + 60_000) throw createError({ statusCode: 400, message: 'at: a cleaning cannot be recorded in the future' })
  const photos = [...new Set(input.photos ?? [])]
  const missing = await missingUploadIds(sequelize, photos)
  if (missing.length) throw createError({ statusCode: 400, message: `photos: no uploaded photo ${missing.join(', ')}` })
  // a trigger (migration 0012) recounts the cleaned blocks' tallies from their latest cleaning in the same statement
  const [rows] = await sequelize.query(`
    INSERT INTO cleanings (layout_id, blocks, method, notes, done_at, done_by, created_at, photos)
    VALUES (:layoutId, ARRAY[:blocks]::varchar[], :method, :notes, :at, :userId, now(), CAST(:photos AS uuid[]))
    RETURNING id
  `, { replacements: { layoutId, blocks: [...new Set(input.blocks)], method: input.method, notes: input.notes || null, at: new Date(input.at ?? now), userId, photos: `{${photos.join(',')}}` } })
  return (rows as { id: number }[])[0]!.id
}

/** The latest cleanings of a layout, newest first, with who did them. */
export async function listCleanings(sequelize: Sequelize, layoutId: number, limit = 50): Promise<CleaningRecord[]> {
  const rows = await sequelize.query<{ id: number, blocks: string[], method: string, notes: string | null, done_at: Date, name: string | null, photos: string[] }>(`
    SELECT c.id, c.blocks, c.method, c.notes, c.done_at, u.name, c.photos::text[] AS photos
    FROM cleanings c LEFT JOIN users u ON u.id = c.done_by
    WHERE c.layout_id = :layoutId ORDER BY c.done_at DESC, c.id DESC LIMIT :limit
  `, { replacements: { layoutId, limit }, type: QueryTypes.SELECT })
  return rows.map(r => ({ id: r.id, blocks: r.blocks, method: r.method, notes: r.notes, at: r.done_at.toISOString(), by: r.name, photos: r.photos.map(uploadedPhoto) }))
}
