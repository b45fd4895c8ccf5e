import { QueryTypes, type Sequelize } from 'sequelize'
import { journalTimeProblem, type JournalRecord } from './journal-entry'

/**
 * One INSERT for a whole batch: each column goes as one array parameter and unnest() turns them back into
 * rows, in array order (WITH ORDINALITY ... ORDER BY keeps it explicit), so ids ascend in append order.
 * ON CONFLICT on the entry key skips rows a previous attempt already stored (its acknowledgement was lost).
 * scripts/bench-journal.ts compares this with Sequelize's bulkCreate and a multi-row VALUES list.
 *
 * Fencing (several processes): a row with an owner epoch is stored only while that epoch is the layout's
 * current one. FOR SHARE on the owner row makes a takeover (which bumps the epoch with an UPDATE) wait for
 * a write in progress, and a write after the takeover reads the new epoch: a former owner's rows never land
 * after the new owner has read the journal. Rows without an epoch (a process alone) are not fenced.
 */
const INSERT_SQL = `
WITH owners AS (
  SELECT layout_id, epoch FROM layout_owners WHERE layout_id = ANY($1::int[]) FOR SHARE
)
INSERT INTO events (layout_id, session_id, at, type, subject, payload, user_id, entry_key, owner_epoch)
SELECT layout_id, session_id, at, type, subject, payload, user_id, entry_key, owner_epoch
FROM unnest($1::int[], $2::int[], $3::timestamptz[], $4::text[], $5::text[], $6::jsonb[], $7::int[], $8::text[], $9::bigint[])
  WITH ORDINALITY AS r(layout_id, session_id, at, type, subject, payload, user_id, entry_key, owner_epoch, n)
WHERE r.owner_epoch IS NULL OR r.owner_epoch = (SELECT o.epoch FROM owners o WHERE o.layout_id = r.layout_id)
ORDER BY n
ON CONFLICT (entry_key) DO NOTHING`

export interface JournalBatchResult {
  /** Rows added by this call. */
  inserted: number
  /** Entries whose key was already in the table. */
  alreadyStored: number
  /** Entries PostgreSQL refuses for their content (e.g. an unknown layout), with the reason. */
  rejected: { entry: JournalRecord, reason: string }[]
}

/** Inserts the entries as one statement; returns how many rows were new. Throws what PostgreSQL throws. */
export async function insertJournalRecords(sequelize: Sequelize, entries: JournalRecord[]): Promise<number> {
  const bind = [
    entries.map(e => e.layoutId),
    entries.map(e => e.sessionId),
    entries.map(e => new Date(e.at).toISOString()),
    entries.map(e => e.type),
    entries.map(e => e.subject),
    entries.map(e => e.payloadJson),
    entries.map(e => e.userId),
    entries.map(e => e.key),
    entries.map(e => e.epoch),
  ]
  const [, rowCount] = await sequelize.query(INSERT_SQL, { bind, type: QueryTypes.INSERT })
  return Number(rowCount ?? 0)
}

/** Why a row cannot be stored as it is, or null. */
export function journalRowProblem(entry: JournalRecord): string | null {
  if (!Number.isSafeInteger(entry.layoutId)) return `layout id ${String(entry.layoutId)} is not a whole number`
  return journalTimeProblem(entry.at)
}

/** The SQLSTATE of a failed query, when PostgreSQL sent one. */
function sqlState(error: unknown): string | undefined {
  const e = error as { original?: { code?: unknown }, parent?: { code?: unknown }, code?: unknown }
  const code = e?.original?.code ?? e?.parent?.code ?? e?.code
  return typeof code === 'string' && /^[0-9A-Z]{5}$/.test(code) ? code : undefined
}

/**
 * True when PostgreSQL refused the rows themselves (data exception, class 22, or a broken constraint such as
 * an unknown layout, class 23): sending the same rows again would fail again. Anything else (refused
 * connection, server shutting down, connection cut) is worth retrying.
 */
export function isRefusedJournalRow(error: unknown): boolean {
  // Thrown here, not by PostgreSQL, while turning a row into parameters: that row would throw again.
  if (error instanceof RangeError || error instanceof TypeError) return true
  const state = sqlState(error)
  return state !== undefined && (state.startsWith('22') || state.startsWith('23'))
}

/**
 * Writes a batch. When PostgreSQL refuses some rows, the batch is split in halves (in order) until the
 * refused rows stand alone; the others are stored and the refused ones returned, so one bad entry cannot
 * hold up the journal. Connection problems are thrown for the caller to retry the whole batch later.
 */
export async function writeJournalBatch(sequelize: Sequelize, entries: JournalRecord[]): Promise<JournalBatchResult> {
  const result: JournalBatchResult = { inserted: 0, alreadyStored: 0, rejected: [] }
  // Rows that cannot be stored (e.g. read back from a spill file an older version wrote) are refused here.
  const writable: JournalRecord[] = []
  for (const entry of entries) {
    const problem = journalRowProblem(entry)
    if (problem) result.rejected.push({ entry, reason: problem })
    else writable.push(entry)
  }
  const write = async (part: JournalRecord[]): Promise<void> => {
    try {
      const inserted = await insertJournalRecords(sequelize, part)
      result.inserted += inserted
      result.alreadyStored += part.length - inserted
    } catch (error) {
      if (!isRefusedJournalRow(error)) throw error
      if (part.length === 1) {
        result.rejected.push({ entry: part[0]!, reason: (error as Error).message })
        return
      }
      const half = Math.ceil(part.length / 2)
      await write(part.slice(0, half))
      await write(part.slice(half))
    }
  }
  if (writable.length) await write(writable)
  return result
}
