import { QueryTypes, type Transaction } from 'sequelize'
import type { H3Event } from 'h3'
import type { Layout as LayoutRow } from '../database/models'
import { validateLayout } from '#shared/signalling'
import type { ValidationError } from '#shared/signalling'
import type { Layout as LayoutDefinition } from '#shared/schemas/layout'
import { summarizeChanges, type ChangeSummary } from '#shared/layouts/changes'
import { blankLayout, slugFor } from '#shared/layouts/blank'
import type { LayoutSummary, LayoutVersionView } from '#shared/types/layouts'
import type { CreateLayoutBody, SaveLayoutBody, UpdateLayoutBody } from '#shared/schemas/layout-api'

interface StoredDefinition { blocks?: unknown[], signals?: unknown[], turnouts?: unknown[], areas?: unknown[], scale?: { name?: string } }

interface ListRow {
  id: number
  slug: string
  name: string
  version: number
  latest_version: number
  definition: StoredDefinition
  updated_at: Date
  archived_at: Date | null
  in_use: boolean
  has_journal: boolean
  saved_by: string | null
  saved_at: Date | null
}

/** Every layout, archived ones only when asked for. */
export async function listLayouts({ archived = false } = {}): Promise<LayoutSummary[]> {
  const rows = await useDatabase().sequelize.query<ListRow>(`
    SELECT l.id, l.slug, l.name, l.version, l.latest_version, l.definition, l.updated_at, l.archived_at,
      EXISTS (SELECT 1 FROM operating_sessions s WHERE s.layout_id = l.id AND s.ended_at IS NULL) AS in_use,
      EXISTS (SELECT 1 FROM events e WHERE e.layout_id = l.id) AS has_journal,
      lv.created_at AS saved_at, u.name AS saved_by
    FROM layouts l
    LEFT JOIN layout_versions lv ON lv.layout_id = l.id AND lv.version = l.latest_version
    LEFT JOIN users u ON u.id = lv.created_by
    ${archived ? '' : 'WHERE l.archived_at IS NULL'}
    ORDER BY l.name, l.id`, { type: QueryTypes.SELECT })
  return rows.map(row => ({
    id: row.id, slug: row.slug, name: row.name, version: row.version, latestVersion: row.latest_version,
    scale: row.definition.scale?.name ?? null,
    blocks: row.definition.blocks?.length ?? 0, signals: row.definition.signals?.length ?? 0,
    turnouts: row.definition.turnouts?.length ?? 0, areas: row.definition.areas?.length ?? 0,
    updatedAt: new Date(row.updated_at).toISOString(), archived: row.archived_at !== null,
    inUse: row.in_use, hasJournal: row.has_journal,
    lastSavedBy: row.saved_by, lastSavedAt: row.saved_at ? new Date(row.saved_at).toISOString() : null,
  }))
}

async function findLayout(id: number, transaction?: Transaction): Promise<LayoutRow> {
  const row = await useDatabase().models.Layout.findByPk(id, { transaction, lock: transaction ? transaction.LOCK.UPDATE : undefined })
  if (!row) throw createError({ statusCode: 404, message: `id: no layout with id ${id}` })
  return row
}

export async function getLayout(id: number) {
  const row = await findLayout(id)
  return {
    id: row.id, slug: row.slug, name: row.name, version: row.version, latestVersion: row.latestVersion,
    archived: row.archivedAt !== null, definition: row.definition,
  }
}

/** 400 listing every validation error with its path, as every other validation failure does. */
function invalidLayout(errors: ValidationError[], prefix = 'definition'): never {
  const issues = errors.map(e => ({ path: prefix ? `${prefix}.${e.path}` : e.path, message: e.message }))
  throw createError({
    statusCode: 400, statusMessage: 'Bad Request',
    message: `The layout has ${errors.length} error${errors.length === 1 ? '' : 's'}: ${issues.slice(0, 5).map(i => `${i.path}: ${i.message}`).join('; ')}${issues.length > 5 ? '; …' : ''}`,
    data: { issues },
  })
}

async function runningSession(layoutId: number, transaction?: Transaction) {
  return useDatabase().models.OperatingSession.findOne({ where: { layoutId, endedAt: null }, transaction })
}

async function uniqueSlug(name: string, transaction: Transaction): Promise<string> {
  const base = slugFor(name)
  const taken = new Set((await useDatabase().models.Layout.findAll({ attributes: ['slug'], transaction })).map(r => r.slug))
  if (!taken.has(base)) return base
  for (let n = 2; ; n++) if (!taken.has(`${base}-${n}`)) return `${base}-${n}`
}

/** Creates a layout with version 1 (current) from a checked definition, inside `transaction`. */
async function insertLayout(name: string, layout: LayoutDefinition, userId: number, transaction: Transaction) {
  const { Layout, LayoutVersion } = useDatabase().models
  const slug = await uniqueSlug(name, transaction)
  const row = await Layout.create({ slug, name, definition: layout, version: 1, latestVersion: 1 }, { transaction })
  await LayoutVersion.create({ layoutId: row.id, version: 1, definition: layout, createdBy: userId, summary: summarizeChanges(null, layout), valid: true }, { transaction })
  return row
}

/** A new layout: blank, a copy of another's current version, or the given definition (which must validate). */
export async function createLayout(body: CreateLayoutBody, userId: number) {
  let source: unknown
  if (body.copyOf !== undefined) source = { ...(await findLayout(body.copyOf)).definition as object, name: body.name }
  else source = body.definition ?? blankLayout(body.name)
  const checked = validateLayout(source)
  if (!checked.ok) invalidLayout(checked.errors)
  const row = await useDatabase().sequelize.transaction(t => insertLayout(body.name, checked.layout, userId, t))
  await liveLayouts()?.startLayout(row.id)
  return { id: row.id, slug: row.slug, version: row.version }
}

export async function duplicateLayout(id: number, name: string, userId: number) {
  return createLayout({ name, copyOf: id }, userId)
}

/** 409 when `baseVersion` is not the newest version: names the newer version, who saved it and when. */
async function checkBase(row: LayoutRow, baseVersion: number, transaction: Transaction): Promise<void> {
  if (baseVersion === row.latestVersion) return
  const newer = await useDatabase().models.LayoutVersion.findOne({
    where: { layoutId: row.id, version: row.latestVersion }, include: [{ association: 'author', attributes: ['name'] }], transaction,
  })
  const savedBy = (newer as unknown as { author?: { name: string } } | null)?.author?.name ?? 'someone'
  const savedAt = newer?.createdAt.toISOString() ?? null
  throw createError({
    statusCode: 409,
    message: `baseVersion: this edit is based on version ${baseVersion}, but ${savedBy} saved version ${row.latestVersion}${savedAt ? ` at ${savedAt}` : ''}. Reload that version, or save yours as a copy.`,
    data: { reason: 'newer-version', latestVersion: row.latestVersion, savedBy, savedAt },
  })
}

function refuseWhileRunning(name: string): never {
  throw createError({
    statusCode: 409,
    message: `An operating session is running on ${name}: a new version can be made current only when it has ended. Save it as a draft meanwhile.`,
    data: { reason: 'session-running' },
  })
}

/**
 * Saves a new version. Without `draft` it must validate and becomes current (the live runtime reloads);
 * refused while an operating session runs on the layout. A draft is kept in the history only.
 */
export async function saveLayout(id: number, body: SaveLayoutBody, userId: number): Promise<{ version: number, current: boolean }> {
  const checked = validateLayout(body.definition)
  if (!body.draft && !checked.ok) invalidLayout(checked.errors)
  if (body.draft && (typeof body.definition !== 'object' || body.definition === null || Array.isArray(body.definition))) {
    throw createError({ statusCode: 400, message: 'definition: a draft is a JSON object', data: { issues: [{ path: 'definition', message: 'a draft is a JSON object' }] } })
  }
  const { sequelize, models } = useDatabase()
  const result = await sequelize.transaction(async (transaction) => {
    const row = await findLayout(id, transaction)
    if (row.archivedAt) throw createError({ statusCode: 409, message: `${row.name} is archived: restore it from the archive before editing it.`, data: { reason: 'archived' } })
    await checkBase(row, body.baseVersion, transaction)
    if (!body.draft && await runningSession(id, transaction)) refuseWhileRunning(row.name)
    const previous = await models.LayoutVersion.findOne({ where: { layoutId: id, version: row.latestVersion }, transaction })
    const definition = checked.ok ? checked.layout : body.definition
    const version = row.latestVersion + 1
    await models.LayoutVersion.create({
      layoutId: id, version, definition, createdBy: userId, valid: checked.ok,
      summary: summarizeChanges((previous?.definition ?? row.definition) as LayoutDefinition, definition as LayoutDefinition),
    }, { transaction })
    row.latestVersion = version
    if (!body.draft) {
      row.version = version
      row.definition = definition
    }
    row.changed('updatedAt', true)
    await row.save({ transaction })
    return { version, current: !body.draft }
  })
  if (result.current) await liveLayouts()?.reloadLayout(id)
  return result
}

/** Makes an old version current again, as a new version (the history is never rewritten). */
export async function restoreLayoutVersion(id: number, version: number, baseVersion: number, userId: number) {
  const old = await useDatabase().models.LayoutVersion.findOne({ where: { layoutId: id, version } })
  if (!old) throw createError({ statusCode: 404, message: `version: layout ${id} has no version ${version}` })
  return saveLayout(id, { definition: old.definition as object, baseVersion }, userId)
}

export async function updateLayout(id: number, body: UpdateLayoutBody) {
  const { sequelize } = useDatabase()
  const change = await sequelize.transaction(async (transaction) => {
    const row = await findLayout(id, transaction)
    const wasArchived = row.archivedAt !== null
    if (body.archived === true && !wasArchived && await runningSession(id, transaction)) {
      throw createError({ statusCode: 409, message: `An operating session is running on ${row.name}: end it before archiving the layout.`, data: { reason: 'session-running' } })
    }
    if (body.name !== undefined) row.name = body.name
    if (body.archived !== undefined) row.archivedAt = body.archived ? (row.archivedAt ?? new Date()) : null
    await row.save({ transaction })
    return { row, archivedNow: !wasArchived && row.archivedAt !== null, restoredNow: wasArchived && row.archivedAt === null }
  })
  if (change.archivedNow) liveLayouts()?.stopLayout(change.row.slug)
  if (change.restoredNow) await liveLayouts()?.startLayout(id)
  return { id: change.row.id, slug: change.row.slug, name: change.row.name, archived: change.row.archivedAt !== null }
}

/** Deletes a layout that has no journal entries and no sessions; one with a journal can only be archived. */
export async function deleteLayout(id: number): Promise<void> {
  const { sequelize, models } = useDatabase()
  const slug = await sequelize.transaction(async (transaction) => {
    const row = await findLayout(id, transaction)
    const journal = await models.JournalEvent.findOne({ where: { layoutId: id }, attributes: ['id'], transaction })
    const session = await models.OperatingSession.findOne({ where: { layoutId: id }, attributes: ['id'], transaction })
    if (journal || session) {
      throw createError({ statusCode: 409, message: `${row.name} has journal entries or operating sessions: archive it instead (it can be restored later).`, data: { reason: 'has-journal' } })
    }
    // Controllers assigned to the layout stay, unassigned.
    await models.Device.update({ layoutId: null }, { where: { layoutId: id }, transaction })
    await row.destroy({ transaction })
    return row.slug
  })
  liveLayouts()?.stopLayout(slug)
}

export async function listLayoutVersions(id: number): Promise<LayoutVersionView[]> {
  const row = await findLayout(id)
  const versions = await useDatabase().models.LayoutVersion.findAll({
    where: { layoutId: id }, order: [['version', 'DESC']], attributes: ['version', 'createdAt', 'summary', 'valid'],
    include: [{ association: 'author', attributes: ['name'] }],
  })
  return versions.map(v => ({
    version: v.version, createdAt: v.createdAt.toISOString(),
    author: (v as unknown as { author?: { name: string } | null }).author?.name ?? null,
    summary: v.summary as ChangeSummary, valid: v.valid, current: v.version === row.version,
  }))
}

export async function getLayoutVersion(id: number, version: number) {
  const row = await findLayout(id)
  const v = await useDatabase().models.LayoutVersion.findOne({ where: { layoutId: id, version }, include: [{ association: 'author', attributes: ['name'] }] })
  if (!v) throw createError({ statusCode: 404, message: `version: layout ${id} has no version ${version}` })
  return {
    id: row.id, slug: row.slug, name: row.name, version: v.version, current: v.version === row.version, valid: v.valid,
    createdAt: v.createdAt.toISOString(), author: (v as unknown as { author?: { name: string } | null }).author?.name ?? null,
    summary: v.summary as ChangeSummary, definition: v.definition,
  }
}

/** The current version's definition as a JSON file download. */
export async function exportLayout(event: H3Event, id: number): Promise<string> {
  const row = await findLayout(id)
  setResponseHeader(event, 'content-type', 'application/json; charset=utf-8')
  setResponseHeader(event, 'content-disposition', `attachment; filename="${row.slug}-v${row.version}.json"`)
  return `${JSON.stringify(row.definition, null, 2)}\n`
}

export const IMPORT_MAX_BYTES = 1024 * 1024

/**
 * A layout from an uploaded JSON file (multipart field `file`, at most 1 MB): read as JSON whatever its name
 * or declared type, checked by validateLayout, stored in one transaction; nothing is stored when anything fails.
 */
export async function importLayout(event: H3Event, userId: number) {
  const fail = (path: string, message: string, statusCode = 400): never => {
    throw createError({ statusCode, statusMessage: statusCode === 413 ? 'Payload Too Large' : 'Bad Request', message: `${path}: ${message}`, data: { issues: [{ path, message }] } })
  }
  const declared = Number(getRequestHeader(event, 'content-length') ?? 0)
  if (declared > IMPORT_MAX_BYTES + 64 * 1024) fail('file', 'the file is larger than 1 MB', 413)
  if (!(getRequestHeader(event, 'content-type') ?? '').toLowerCase().startsWith('multipart/form-data')) fail('file', 'send the file as multipart/form-data in the field "file"')
  let parts: Awaited<ReturnType<typeof readMultipartFormData>>
  try { parts = await readMultipartFormData(event) } catch { fail('file', 'the upload could not be read as multipart/form-data') }
  const file = parts?.find(p => p.name === 'file')
  if (!file) fail('file', 'no file in the field "file"')
  if (file!.data.length > IMPORT_MAX_BYTES) fail('file', 'the file is larger than 1 MB', 413)
  if (file!.data.length === 0) fail('file', 'the file is empty')
  let definition: unknown
  try { definition = JSON.parse(new TextDecoder('utf-8', { fatal: true }).decode(file!.data)) } catch (error) {
    fail('file', `the file is not JSON text (${(error as Error).message.slice(0, 120)})`)
  }
  const checked = validateLayout(definition)
  if (!checked.ok) invalidLayout(checked.errors, '')
  const nameField = parts!.find(p => p.name === 'name')?.data.toString('utf8').trim()
  const name = nameField ? nameField.slice(0, 120) : checked.layout.name
  const row = await useDatabase().sequelize.transaction(t => insertLayout(name, checked.layout, userId, t))
  await liveLayouts()?.startLayout(row.id)
  return { id: row.id, slug: row.slug, version: row.version }
}
