import { mkdirSync } from 'node:fs'
import { join } from 'node:path'
import type { Sequelize } from 'sequelize'
import { journalEntryKey, newJournalBootId, prepareJournalEntry, type JournalRecord } from './journal-entry'
import { writeJournalBatch } from './journal-insert'
import { JournalSetAside, type SetAsideEntry } from './journal-set-aside'
import { appendToJournalSpillNow, findLeftoverJournalSpills, readJournalSpill, removeJournalSpill, JournalSpillFile, type LeftoverJournalSpill } from './journal-spill'

/** One event as the live runtime hands it to the journal. */
export interface JournalEntry {
  layoutId: number
  sessionId: number | null
  at: number // epoch ms
  type: string
  subject: string | null
  payload: Record<string, unknown>
  userId: number | null
  /**
   * The owner epoch of the layout this entry was made under (several processes); the database refuses it
   * once another process has taken the layout over. Absent for a process that runs alone.
   */
  epoch?: number | null
}

export interface JournalOptions {
  sequelize: Sequelize
  /** Folder for the spill files; created if missing. */
  spillDir: string
  /** How long an entry may wait for the next batch (default 100 ms). */
  flushIntervalMs?: number
  /** Rows per INSERT (default 500); a full batch is written at once. */
  batchSize?: number
  /** Entries held in memory before they are written to the spill file (default 20,000). */
  memoryLimit?: number
  /** Wait between attempts while the database is unreachable (default 1000 ms). */
  retryMs?: number
  /** File for entries that can never be stored (default `set-aside.jsonl` in the spill folder). */
  setAsidePath?: string
  log?: (message: string) => void
}

export interface JournalStats {
  /** Entries held in memory, not yet stored. */
  queued: number
  /** Entries waiting in spill files (this journal's and ones left by an earlier run). */
  spilled: number
  /** Entries confirmed stored since start. */
  written: number
  /** Failed write attempts since start (each is retried). */
  writeFailures: number
  /** False from a failed write until the next successful one. */
  databaseUp: boolean
  lastError: string | null
  /** Entries found already stored when written: an earlier attempt had succeeded unacknowledged. */
  alreadyStored: number
  /** Entries PostgreSQL refused for their content (each is logged), e.g. one naming a deleted layout. */
  rejected: number
  /** Entries in the set-aside file (refused ones, kept with their reason), this run's and earlier runs'. */
  setAside: number
  /** Since when (epoch ms) every write attempt has failed; null while writes succeed. */
  failingSince: number | null
}

export interface Journal {
  /** Queues an entry; never throws, never waits. */
  append(entry: JournalEntry): void
  /**
   * Writes what is queued now. Resolves when every entry appended before the call is stored, or as soon as
   * an attempt fails (the entries stay queued and are retried; see stats().databaseUp).
   */
  flush(): Promise<void>
  /** Writes what it can within a few seconds; what is left stays in the spill file for the next start. */
  close(): Promise<void>
  stats(): JournalStats
  /** The newest set-aside entries, newest first. */
  setAsideEntries(limit: number): Promise<SetAsideEntry[]>
}

const CLOSE_WITHIN_MS = 3000
// A write that hangs (e.g. a network that drops packets) is given up and retried. Safe: if the first
// attempt commits after all, the retry finds its keys and skips them.
const WRITE_TIMEOUT_MS = 10_000

/** A batch read for writing, and where it came from (to mark it stored there). */
interface Batch {
  entries: JournalRecord[]
  from: 'leftover' | 'spill' | 'memory'
  /** Byte offset after the batch, for batches read from a file. */
  end: number
  unreadable: number
}

function describe(error: unknown): string {
  const e = error as { message?: string, original?: { message?: string } }
  return e?.original?.message || e?.message || String(error)
}

function timeout<T>(work: Promise<T>, ms: number, what: string): Promise<T> {
  let timer: NodeJS.Timeout
  const limit = new Promise<never>((_, fail) => { timer = setTimeout(() => fail(new Error(`${what} took longer than ${ms} ms`)), ms) })
  return Promise.race([work, limit]).finally(() => clearTimeout(timer))
}

const sleep = (ms: number) => new Promise(done => setTimeout(done, Math.max(0, ms)))

/** The promise's result, or false when it takes longer than `ms`. */
function within(work: Promise<boolean>, ms: number): Promise<boolean> {
  let timer: NodeJS.Timeout
  const late = new Promise<false>((done) => { timer = setTimeout(() => done(false), Math.max(0, ms)) })
  return Promise.race([work, late]).finally(() => clearTimeout(timer))
}

/**
 * The event journal: entries are numbered as they are appended and written strictly in that order by one
 * writer, a batch at a time. Entries not yet stored live in three places, oldest first: spill files left by
 * an earlier run, this journal's spill file, memory. An entry leaves memory only once it is stored or on disk
 * in the spill file; a spill file is deleted only once every entry in it is stored.
 */
class EventJournal implements Journal {
  private readonly sequelize: Sequelize
  private readonly flushIntervalMs: number
  private readonly batchSize: number
  private readonly memoryLimit: number
  private readonly retryMs: number
  private readonly log: (message: string) => void

  private readonly bootId = newJournalBootId()
  private readonly spill: JournalSpillFile
  private readonly setAside: JournalSetAside
  private readonly ready: Promise<void>
  private leftovers: LeftoverJournalSpill[] = []
  /** Entries not yet stored and not yet safe in the spill file, in append order. */
  private memory: JournalRecord[] = []
  private lastSeq = 0
  /** Every entry of this journal numbered up to here is stored (or refused by PostgreSQL). */
  private storedSeq = 0

  private pumping: Promise<boolean> | null = null
  private timer: NodeJS.Timeout | null = null
  private timerDue = 0
  private retryAfter = 0
  private spilling: Promise<void> | null = null
  private spillRetryAfter = 0
  private closing: Promise<void> | null = null
  /** Set when close() stops writing to the database. */
  private closed = false
  /** Set when close() has saved what was left; later entries go straight to the file. */
  private finished = false

  private written = 0
  private writeFailures = 0
  private alreadyStored = 0
  private rejected = 0
  private databaseUp = true
  private failingSince: number | null = null
  private lastError: string | null = null

  constructor(options: JournalOptions) {
    this.sequelize = options.sequelize
    this.flushIntervalMs = options.flushIntervalMs ?? 100
    this.batchSize = Math.max(1, options.batchSize ?? 500)
    this.memoryLimit = Math.max(1, options.memoryLimit ?? 20_000)
    this.retryMs = options.retryMs ?? 1000
    this.log = options.log ?? (message => console.warn(`[blockbell] ${message}`))
    mkdirSync(options.spillDir, { recursive: true })
    this.spill = new JournalSpillFile(options.spillDir, this.bootId)
    this.setAside = new JournalSetAside(options.setAsidePath ?? join(options.spillDir, 'set-aside.jsonl'))
    this.ready = this.loadLeftovers(options.spillDir)
  }

  private async loadLeftovers(dir: string): Promise<void> {
    try {
      this.leftovers = await findLeftoverJournalSpills(dir)
      const lines = this.leftovers.reduce((n, f) => n + f.count, 0)
      if (this.leftovers.length) {
        this.log(`Journal: found ${this.leftovers.length} spill file(s) left in ${dir} (${lines} lines); writing them before new entries`)
        this.wake(0)
      }
    } catch (error) {
      this.log(`Journal: could not look for leftover spill files in ${dir}: ${describe(error)}`)
    }
  }

  append(entry: JournalEntry): void {
    try {
      const seq = ++this.lastSeq
      const { stored, problems } = prepareJournalEntry(entry, seq, journalEntryKey(this.bootId, seq))
      if (problems.length) this.log(`Journal: entry ${stored.key} (${stored.type}): ${problems.join('; ')}`)
      if (this.finished) return this.appendAfterClose(stored)
      this.memory.push(stored) // while closing, shutDown() saves it with the rest
      if (this.closing) return
      if (this.memory.length >= this.memoryLimit) this.spillMemory()
      this.wake(this.memory.length >= this.batchSize ? 0 : this.flushIntervalMs)
    } catch (error) {
      this.log(`Journal: could not queue an entry: ${describe(error)}`)
    }
  }

  private appendAfterClose(stored: JournalRecord): void {
    try {
      appendToJournalSpillNow(this.spill.path, stored)
      this.log(`Journal: entry ${stored.key} (${stored.type}) arrived after close; kept in ${this.spill.path}`)
    } catch (error) {
      this.log(`Journal: entry ${stored.key} (${stored.type}) arrived after close and could not be kept: ${describe(error)}`)
    }
  }

  // ---- writing ----

  /** Makes sure a write happens within `delay` ms (or when the retry wait ends). */
  private wake(delay: number): void {
    if (this.closing || this.pumping) return // a running writer picks up new entries itself
    const due = Math.max(Date.now() + delay, this.retryAfter)
    if (this.timer && this.timerDue <= due) return
    if (this.timer) clearTimeout(this.timer)
    this.timerDue = due
    this.timer = setTimeout(() => { this.timer = null; void this.pump(false) }, due - Date.now())
    this.timer.unref()
  }

  /** Runs the writer unless it is running. Resolves true when it ran out of work, false after a failure. */
  private pump(drain: boolean): Promise<boolean> {
    if (this.pumping) return this.pumping
    if (this.timer) { clearTimeout(this.timer); this.timer = null }
    this.pumping = this.writeAll(drain).finally(() => {
      this.pumping = null
      if (this.hasWork()) this.wake(this.leftovers.length || this.memory.length >= this.batchSize ? 0 : this.flushIntervalMs)
    })
    return this.pumping
  }

  private hasWork(): boolean {
    return this.leftovers.length > 0 || this.spill.waiting(this.storedSeq) > 0 || this.memory.length > 0
  }

  private async writeAll(drain: boolean): Promise<boolean> {
    await this.ready
    try {
      for (let first = true; ; first = false) {
        // After the first batch, a part batch from memory waits for the next interval unless draining.
        const batch = await this.nextBatch(first || drain)
        if (!batch) return true
        if (!await this.write(batch)) return false
      }
    } catch (error) {
      // A spill file that cannot be read (disk trouble): keep everything and try again later.
      this.lastError = describe(error)
      this.retryAfter = Date.now() + this.retryMs
      this.log(`Journal: cannot read the spill file (${this.lastError}); retrying in ${this.retryMs} ms`)
      return false
    }
  }

  /** The oldest entries not yet stored: leftover files first, then this journal's spill file, then memory. */
  private async nextBatch(takePartial: boolean): Promise<Batch | null> {
    while (this.leftovers.length) {
      const file = this.leftovers[0]!
      const read = await this.readLeftover(file)
      if (read.entries.length) return { ...read, from: 'leftover' }
      await this.finishLeftover(file, read.unreadable)
    }
    while (this.spill.waiting(this.storedSeq) > 0) {
      const read = await this.spill.read(this.storedSeq, this.batchSize)
      if (read.entries.length) return { ...read, from: 'spill' }
      if (read.end > this.spill.readOffset) { this.spill.readOffset = read.end; continue }
      // Nothing readable is left although the file should hold more: unreadable lines, logged here.
      this.log(`Journal: ${this.spill.waiting(this.storedSeq)} entries in ${this.spill.path} could not be read back`)
      this.markSeqStored(this.spill.durableSeq)
    }
    if (!this.memory.length || (!takePartial && this.memory.length < this.batchSize)) return null
    return { entries: this.memory.slice(0, this.batchSize), from: 'memory', end: 0, unreadable: 0 }
  }

  private async readLeftover(file: LeftoverJournalSpill) {
    try {
      const read = await readJournalSpill(file.path, file.offset, file.size, this.batchSize)
      if (read.unreadable) this.log(`Journal: ${read.unreadable} unreadable line(s) in ${file.path} skipped (cut short when its writer stopped?)`)
      return read
    } catch (error) {
      // Gone (another journal finished it) or unreadable: move on so new entries are not held up by it.
      if ((error as NodeJS.ErrnoException).code !== 'ENOENT') {
        this.log(`Journal: cannot read ${file.path} (${describe(error)}); it is left in place for the next start`)
        this.leftovers.shift()
      }
      return { entries: [], end: file.size, unreadable: 0 }
    }
  }

  private async finishLeftover(file: LeftoverJournalSpill, unreadable: number): Promise<void> {
    file.count = Math.max(0, file.count - unreadable)
    if (this.leftovers[0] === file) this.leftovers.shift()
    if (!this.closed) await removeJournalSpill(file.path)
  }

  private async write(batch: Batch): Promise<boolean> {
    let result
    try {
      result = await timeout(writeJournalBatch(this.sequelize, batch.entries), WRITE_TIMEOUT_MS, 'Writing a journal batch')
      // Refused entries are on disk with their reason before the journal moves past them.
      await this.setAside.add(result.rejected)
    } catch (error) {
      this.writeFailures++
      this.failingSince ??= Date.now()
      this.lastError = describe(error)
      this.retryAfter = Date.now() + this.retryMs
      if (this.databaseUp) this.log(`Journal: cannot write to the database (${this.lastError}); entries are kept and retried every ${this.retryMs} ms`)
      this.databaseUp = false
      return false
    }
    if (!this.databaseUp) this.log('Journal: database reachable again; writing the entries kept meanwhile')
    this.databaseUp = true
    this.failingSince = null
    this.retryAfter = 0
    this.written += batch.entries.length - result.rejected.length
    this.alreadyStored += result.alreadyStored
    this.rejected += result.rejected.length
    for (const { entry, reason } of result.rejected) {
      this.log(`Journal: entry ${entry.key} (${entry.type} ${entry.subject ?? ''} on layout ${entry.layoutId}) cannot be stored: ${reason}; set aside in ${this.setAside.path}`)
    }
    await this.markStored(batch)
    return true
  }

  private async markStored(batch: Batch): Promise<void> {
    if (batch.from === 'leftover') {
      const file = this.leftovers[0]!
      file.offset = batch.end
      file.count = Math.max(0, file.count - batch.entries.length - batch.unreadable)
      if (file.offset >= file.size) await this.finishLeftover(file, 0)
      return
    }
    if (batch.from === 'spill') this.spill.readOffset = batch.end
    this.markSeqStored(batch.entries[batch.entries.length - 1]!.seq)
    if (!this.closed && this.spill.durableSeq > 0 && this.spill.waiting(this.storedSeq) === 0) {
      await this.spill.removeIfStored(this.storedSeq).catch(error => this.log(`Journal: could not delete ${this.spill.path}: ${describe(error)}`))
    }
  }

  private markSeqStored(seq: number): void {
    this.storedSeq = Math.max(this.storedSeq, seq)
    this.dropFromMemory(this.storedSeq)
  }

  /** Removes entries numbered up to `seq` from memory (they are stored, or safe in the spill file). */
  private dropFromMemory(seq: number): void {
    let n = 0
    while (n < this.memory.length && this.memory[n]!.seq <= seq) n++
    if (n) this.memory = this.memory.slice(n)
  }

  // ---- spilling ----

  /** Moves everything in memory to the spill file, in order, after the entries already there. */
  private spillMemory(): void {
    if (this.spilling || !this.memory.length || Date.now() < this.spillRetryAfter) return
    const entries = this.memory.slice()
    if (this.spill.durableSeq === 0 || this.spill.waiting(this.storedSeq) === 0) {
      this.log(`Journal: ${entries.length} entries waiting; keeping them in ${this.spill.path} until the database takes them`)
    }
    this.spilling = this.spill.append(entries).then(
      () => this.dropFromMemory(this.spill.durableSeq),
      (error) => {
        this.spillRetryAfter = Date.now() + this.retryMs
        this.lastError = describe(error)
        this.log(`Journal: cannot write the spill file ${this.spill.path} (${this.lastError}); entries stay in memory`)
      },
    ).finally(() => {
      this.spilling = null
      if (!this.closing && this.memory.length >= this.memoryLimit) this.spillMemory()
    })
  }

  // ---- flush, close, stats ----

  async flush(): Promise<void> {
    const target = this.lastSeq
    await this.ready
    while (!this.closed && (this.storedSeq < target || this.leftovers.length)) {
      const before = [this.storedSeq, this.leftovers.length, this.leftovers[0]?.offset]
      if (!await this.pump(true)) return
      const after = [this.storedSeq, this.leftovers.length, this.leftovers[0]?.offset]
      if (before.every((v, i) => v === after[i])) return // nothing moved: do not spin
    }
  }

  close(): Promise<void> {
    this.closing ??= this.shutDown()
    return this.closing
  }

  private async shutDown(): Promise<void> {
    if (this.timer) { clearTimeout(this.timer); this.timer = null }
    const deadline = Date.now() + CLOSE_WITHIN_MS
    await this.ready
    while (this.hasWork() && Date.now() < deadline) {
      const ok = await within(this.pump(true), deadline - Date.now())
      if (!ok) await sleep(Math.min(this.retryMs, deadline - Date.now()))
    }
    this.closed = true
    await this.spilling
    // What is still in memory (possibly also being written right now: its keys make that harmless)
    // goes to the spill file, after what is there, for the next start to write. Entries appended
    // meanwhile join memory and are saved by the next round.
    while (this.memory.length) {
      const left = this.memory
      try {
        await this.spill.append(left)
        this.dropFromMemory(this.spill.durableSeq)
      } catch (error) {
        this.log(`Journal: closed; ${left.length} entries could not be saved to ${this.spill.path}: ${describe(error)}`)
        break
      }
    }
    this.finished = true
    if (this.spill.waiting(this.storedSeq) > 0) {
      this.log(`Journal: closed with ${this.spill.waiting(this.storedSeq)} entries not yet stored; they stay in ${this.spill.path} for the next start`)
    }
    await this.spill.close()
  }

  stats(): JournalStats {
    return {
      queued: this.memory.length,
      spilled: this.spill.waiting(this.storedSeq) + this.leftovers.reduce((n, f) => n + f.count, 0),
      written: this.written,
      writeFailures: this.writeFailures,
      databaseUp: this.databaseUp,
      lastError: this.lastError,
      alreadyStored: this.alreadyStored,
      rejected: this.rejected,
      setAside: this.setAside.count,
      failingSince: this.failingSince,
    }
  }

  setAsideEntries(limit: number): Promise<SetAsideEntry[]> {
    return this.setAside.recent(limit)
  }
}

/** Starts a journal; leftover spill files in `spillDir` are written first. */
export function createJournal(options: JournalOptions): Journal {
  return new EventJournal(options)
}
