// What the journal tests share: numbered entries, reading back what was stored, waiting for a condition.
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { QueryTypes } from 'sequelize'
import type { Database } from '../../server/database/connection'
import type { JournalEntry } from '../../server/live/journal'

/** An entry carrying its append number in the payload, so order and completeness can be checked. */
export function numbered(layoutId: number, n: number, at = Date.now()): JournalEntry {
  return { layoutId, sessionId: null, at, type: 'detector', subject: `B${n % 40}`, payload: { n, occupied: n % 2 === 0 }, userId: null }
}

export interface StoredRow { id: string, n: number, key: string, tx: string }

/** The layout's stored events in id order, with the inserting transaction of each (PostgreSQL's xmin). */
export async function storedRows(db: Database, layoutId: number): Promise<StoredRow[]> {
  return db.sequelize.query<StoredRow>(
    `SELECT id, (payload->>'n')::int AS n, entry_key AS key, xmin::text AS tx FROM events WHERE layout_id = :layoutId ORDER BY id`,
    { replacements: { layoutId }, type: QueryTypes.SELECT })
}

/** The sizes of consecutive runs of rows written by the same transaction. */
export function writeGroups(rows: StoredRow[]): number[] {
  const groups: number[] = []
  rows.forEach((row, i) => {
    if (i > 0 && rows[i - 1]!.tx === row.tx) groups[groups.length - 1]!++
    else groups.push(1)
  })
  return groups
}

export function range(from: number, count: number): number[] {
  return Array.from({ length: count }, (_, i) => from + i)
}

export async function waitUntil(condition: () => boolean | Promise<boolean>, what: string, timeoutMs = 20_000): Promise<void> {
  const deadline = Date.now() + timeoutMs
  while (!await condition()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting until ${what}`)
    await new Promise(done => setTimeout(done, 25))
  }
}

export const sleep = (ms: number) => new Promise(done => setTimeout(done, ms))

const scratchDirs: string[] = []

/** A new empty folder; removeScratchDirs() (in afterAll) deletes it. */
export function scratchDir(name: string): string {
  const dir = mkdtempSync(join(process.env.BLOCKBELL_TEST_DATA ?? tmpdir(), `${name}-`))
  scratchDirs.push(dir)
  return dir
}

export function removeScratchDirs(): void {
  for (const dir of scratchDirs.splice(0)) rmSync(dir, { recursive: true, force: true })
}

let layoutCount = 0
/** A layout of its own for each test, so tests never read each other's events. */
export async function freshLayout(db: Database, name = 'Marrow Vale'): Promise<number> {
  layoutCount++
  const layout = await db.models.Layout.create({ slug: `journal-${layoutCount}-${Date.now().toString(36)}`, name: `${name} ${layoutCount}`, definition: {} })
  return layout.id
}
