// Spill files left behind by a journal whose process died: the next journal in the same folder writes
// them, oldest first, before its own entries; a file whose writer still runs is left alone.
import { spawn, type ChildProcess } from 'node:child_process'
import { appendFileSync, readdirSync } from 'node:fs'
import { join, resolve } from 'node:path'
import { createInterface } from 'node:readline'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Database } from '../../server/database/connection'
import { createJournal, type Journal, type JournalOptions, type JournalStats } from '../../server/live/journal'
import { freePort, startThrowawayPostgres, type ThrowawayPostgres } from '../support/postgres'
import { freshLayout, numbered, range, removeScratchDirs, scratchDir, storedRows, waitUntil } from '../support/journal-checks'

const REPO = resolve(import.meta.dirname, '../..')
let cluster: ThrowawayPostgres
let db: Database
const children = new Set<ChildProcess>()

beforeAll(async () => {
  cluster = await startThrowawayPostgres()
  db = await cluster.openMigrated()
})
afterAll(async () => {
  for (const child of children) child.kill('SIGKILL')
  await db?.sequelize.close()
  await cluster?.destroy()
  removeScratchDirs()
})

function journal(options: Partial<JournalOptions> & { spillDir: string }): Journal {
  return createJournal({ sequelize: db.sequelize, retryMs: 250, log: () => {}, ...options })
}

const spillFiles = (dir: string) => readdirSync(dir).filter(name => name.endsWith('.jsonl')).sort()

/**
 * Starts a writer process whose database is unreachable (nothing listens on its port), so its entries go
 * to the spill file; resolves with the child once it reports them all on disk.
 */
async function spillingWriter(spillDir: string, layoutId: number, first: number, count: number) {
  const settings = { ...cluster.settings, port: await freePort() }
  // node itself (not the tsx wrapper, which runs node as a child) so that killing it kills the writer.
  const child = spawn(process.execPath,
    ['--import', 'tsx', 'tests/support/journal-writer-process.ts', JSON.stringify(settings), spillDir, String(layoutId), String(first), String(count), '100'],
    { cwd: REPO, stdio: ['ignore', 'pipe', 'inherit'] })
  children.add(child)
  const [line] = await Promise.race([
    createInterface({ input: child.stdout! })[Symbol.asyncIterator]().next().then(r => [r.value as string]),
    new Promise<never>((_, fail) => child.once('exit', code => fail(new Error(`writer process exited early (${code})`)))),
  ])
  const stats = JSON.parse(line!) as JournalStats
  const kill = async () => {
    const exited = new Promise(done => child.once('exit', done))
    child.kill('SIGKILL')
    await exited
    children.delete(child)
  }
  return { stats, kill }
}

describe('event journal: spill files left by a process that died', () => {
  it('leaves a running writer\'s file alone, and writes it once its writer is killed, before new entries', async () => {
    const layoutId = await freshLayout(db)
    const spillDir = scratchDir('journal-spill')
    const writer = await spillingWriter(spillDir, layoutId, 0, 2000)
    expect(writer.stats).toMatchObject({ spilled: 2000, queued: 0, databaseUp: false })
    expect(spillFiles(spillDir)).toHaveLength(1)

    const beside = journal({ spillDir })
    await beside.flush()
    expect(beside.stats().spilled).toBe(0)
    expect(await storedRows(db, layoutId)).toEqual([])
    expect(spillFiles(spillDir)).toHaveLength(1)
    await beside.close()

    await writer.kill()
    const next = journal({ spillDir })
    for (const n of range(2000, 10)) next.append(numbered(layoutId, n))
    await waitUntil(() => next.stats().written === 2010, 'the left entries and the new ones are written')

    const rows = await storedRows(db, layoutId)
    expect(rows.map(r => r.n)).toEqual(range(0, 2010))
    expect(new Set(rows.map(r => r.key)).size).toBe(2010)
    expect(spillFiles(spillDir)).toEqual([])
    await next.close()
  }, 40_000)

  it('writes files from two dead writers oldest first, skipping a last line cut short', async () => {
    const layoutId = await freshLayout(db)
    const spillDir = scratchDir('journal-spill')
    const older = await spillingWriter(spillDir, layoutId, 0, 1200)
    await older.kill()
    const newer = await spillingWriter(spillDir, layoutId, 1200, 800)
    await newer.kill()
    const files = spillFiles(spillDir)
    expect(files).toHaveLength(2)
    // A crash in the middle of a write leaves half a line at the end of the file.
    appendFileSync(join(spillDir, files[1]!), '{"seq":801,"key":"half-writ')

    const lines: string[] = []
    const next = journal({ spillDir, log: line => lines.push(line) })
    next.append(numbered(layoutId, 2000))
    await waitUntil(() => next.stats().written === 2001, 'both files and the new entry are written')

    expect((await storedRows(db, layoutId)).map(r => r.n)).toEqual(range(0, 2001))
    expect(lines.join('\n')).toMatch(/found 2 spill file\(s\) left in .* \(2001 lines\)/)
    expect(lines.join('\n')).toMatch(/1 unreadable line\(s\) in .*skipped/)
    expect(next.stats()).toMatchObject({ spilled: 0, queued: 0 })
    expect(spillFiles(spillDir)).toEqual([])
    await next.close()
  }, 40_000)
})
