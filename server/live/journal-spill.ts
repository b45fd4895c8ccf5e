import { closeSync, createReadStream, fsyncSync, openSync, writeSync } from 'node:fs'
import { mkdir, open, readdir, stat, unlink, type FileHandle } from 'node:fs/promises'
import { join } from 'node:path'
import { fromJournalSpillLine, toJournalSpillLine, type JournalRecord } from './journal-entry'

// Spill files are JSON lines, one entry a line, named after the journal that wrote them:
// journal-<boot id>.jsonl. Boot ids start with the creation time, so names sort oldest first.
const NAME = /^journal-([0-9a-z]{9})-([0-9a-z]+)-([0-9a-f]+)\.jsonl$/
const READ_CHUNK = 256 * 1024
const LINES_PER_WRITE = 1000

function journalSpillFileName(bootId: string): string {
  return `journal-${bootId}.jsonl`
}

/** Spill files owned by open journals of this process: never taken over by another journal. */
const openFiles = new Set<string>()

function processAlive(pid: number): boolean {
  try {
    process.kill(pid, 0)
    return true
  } catch (error) {
    return (error as NodeJS.ErrnoException).code === 'EPERM'
  }
}

export interface JournalSpillRead {
  entries: JournalRecord[]
  /** Byte offset just past the last line read. */
  end: number
  /** Lines that were not a complete entry (e.g. the last line of a process that died while writing). */
  unreadable: number
}

/**
 * Reads up to `max` entries starting at byte `from`, never past byte `limit`; lines whose entry
 * `skip` says is already stored are passed over.
 */
export async function readJournalSpill(path: string, from: number, limit: number, max: number, skip?: (e: JournalRecord) => boolean): Promise<JournalSpillRead> {
  const result: JournalSpillRead = { entries: [], end: from, unreadable: 0 }
  const take = (line: Buffer) => {
    if (!line.length) return
    const entry = fromJournalSpillLine(line.toString('utf8'))
    if (!entry) result.unreadable++
    else if (!skip?.(entry)) result.entries.push(entry)
  }
  const handle = await open(path, 'r')
  try {
    let offset = from
    let pending = Buffer.alloc(0) // bytes after the last newline seen: the start of an unfinished line
    while (offset < limit) {
      const chunk = Buffer.allocUnsafe(Math.min(READ_CHUNK, limit - offset))
      const { bytesRead } = await handle.read(chunk, 0, chunk.length, offset)
      if (bytesRead === 0) break
      offset += bytesRead
      const data = pending.length ? Buffer.concat([pending, chunk.subarray(0, bytesRead)]) : chunk.subarray(0, bytesRead)
      const dataStart = offset - data.length
      let lineStart = 0
      for (let nl = data.indexOf(10); nl !== -1; nl = data.indexOf(10, lineStart)) {
        take(data.subarray(lineStart, nl))
        lineStart = nl + 1
        result.end = dataStart + lineStart
        if (result.entries.length >= max) return result
      }
      pending = Buffer.from(data.subarray(lineStart))
    }
    if (pending.length && offset >= limit) {
      // A last line without its newline: whole if it parses, else cut short by a crash.
      take(pending)
      result.end = limit
    }
    return result
  } finally {
    await handle.close()
  }
}

async function countLines(path: string): Promise<number> {
  let lines = 0
  let last = 10
  for await (const chunk of createReadStream(path) as AsyncIterable<Buffer>) {
    for (let i = chunk.indexOf(10); i !== -1; i = chunk.indexOf(10, i + 1)) lines++
    if (chunk.length) last = chunk[chunk.length - 1]!
  }
  return last === 10 ? lines : lines + 1
}

/** A spill file left by an earlier journal (a process that died, or a journal closed with entries left). */
export interface LeftoverJournalSpill {
  path: string
  size: number
  /** Lines in it (entries, plus any unreadable line), counted when found. */
  count: number
  /** Byte offset of the first entry not yet stored. */
  offset: number
}

/** Leftover spill files in `dir` whose writer is gone, oldest first. */
export async function findLeftoverJournalSpills(dir: string): Promise<LeftoverJournalSpill[]> {
  const names = (await readdir(dir)).filter(n => NAME.test(n)).sort()
  const found: LeftoverJournalSpill[] = []
  for (const name of names) {
    const path = join(dir, name)
    if (openFiles.has(path)) continue
    const pid = Number.parseInt(NAME.exec(name)![2]!, 36)
    if (pid !== process.pid && processAlive(pid)) continue // another running process still owns it
    const { size } = await stat(path)
    found.push({ path, size, count: size ? await countLines(path) : 0, offset: 0 })
  }
  return found
}

/** Deletes a leftover file whose entries are all stored (already gone is fine). */
export async function removeJournalSpill(path: string): Promise<void> {
  await unlink(path).catch((error: NodeJS.ErrnoException) => { if (error.code !== 'ENOENT') throw error })
}

/** Appends one entry and waits for the disk: only for the rare entry that arrives after close(). */
export function appendToJournalSpillNow(path: string, entry: JournalRecord): void {
  const fd = openSync(path, 'a')
  try {
    writeSync(fd, toJournalSpillLine(entry))
    fsyncSync(fd)
  } finally {
    closeSync(fd)
  }
}

/**
 * The spill file of a running journal. Appends are fsync'd once per call, and every file operation runs
 * one after another, so a removal can never overtake an append.
 */
export class JournalSpillFile {
  readonly path: string
  /** Bytes known to be on disk. */
  durableSize = 0
  /** Highest entry number on disk in this file; entries up to it may leave memory. */
  durableSeq = 0
  /** Entry number of the first entry in the file (0 while the file is absent). */
  firstSeq = 0
  /** Byte offset of the first entry not yet stored in the database. */
  readOffset = 0
  private handle: FileHandle | null = null
  private ops: Promise<unknown> = Promise.resolve()

  constructor(private readonly dir: string, bootId: string) {
    this.path = join(dir, journalSpillFileName(bootId))
    openFiles.add(this.path)
  }

  private serial<T>(op: () => Promise<T>): Promise<T> {
    const next = this.ops.then(op)
    this.ops = next.catch(() => {})
    return next
  }

  /** Entries on disk in this file that are not yet stored in the database. */
  waiting(storedSeq: number): number {
    return this.durableSeq > storedSeq ? this.durableSeq - Math.max(storedSeq, this.firstSeq - 1) : 0
  }

  append(entries: JournalRecord[]): Promise<void> {
    return this.serial(async () => {
      if (!entries.length) return
      if (!this.handle) {
        await mkdir(this.dir, { recursive: true })
        this.handle = await open(this.path, 'a')
        await syncDirectory(this.dir) // so the new file's name survives a power cut too
        this.firstSeq = entries[0]!.seq
      }
      let written = 0
      for (let i = 0; i < entries.length; i += LINES_PER_WRITE) {
        const text = entries.slice(i, i + LINES_PER_WRITE).map(toJournalSpillLine).join('')
        const { bytesWritten } = await this.handle.write(text)
        written += bytesWritten
      }
      await this.handle.sync()
      this.durableSize += written
      this.durableSeq = entries[entries.length - 1]!.seq
    })
  }

  /** Reads the next entries after `storedSeq`, starting at the read offset. */
  read(storedSeq: number, max: number): Promise<JournalSpillRead> {
    return readJournalSpill(this.path, this.readOffset, this.durableSize, max, e => e.seq <= storedSeq)
  }

  /** Deletes the file once every entry in it is stored. */
  removeIfStored(storedSeq: number): Promise<void> {
    return this.serial(async () => {
      if (!this.handle || this.durableSeq > storedSeq) return
      await this.handle.close()
      this.handle = null
      await unlink(this.path)
      this.durableSize = 0
      this.readOffset = 0
      this.firstSeq = 0
    })
  }

  /** Waits for pending writes, closes the file and lets a later journal take it over. */
  close(): Promise<void> {
    return this.serial(async () => {
      await this.handle?.close()
      this.handle = null
      openFiles.delete(this.path)
    })
  }
}

async function syncDirectory(dir: string): Promise<void> {
  const handle = await open(dir, 'r')
  try { await handle.sync() } finally { await handle.close() }
}
