import { existsSync, readFileSync } from 'node:fs'
import { open, readFile } from 'node:fs/promises'
import type { JournalRecord } from './journal-entry'

/** An entry the journal could not store, kept with the reason so an admin can see what was lost. */
export interface SetAsideEntry {
  setAsideAt: string
  reason: string
  key: string
  layoutId: number
  at: number
  type: string
  subject: string | null
  payload: unknown
}

/**
 * The file of entries PostgreSQL will never take (one JSON line each). Writing them here, synced, before the
 * journal moves past them means one bad entry neither blocks the entries behind it nor disappears unseen.
 */
export class JournalSetAside {
  /** Entries in the file, this run's and earlier runs'. */
  count = 0

  constructor(readonly path: string) {
    if (existsSync(path)) this.count = readFileSync(path, 'utf8').split('\n').filter(Boolean).length
  }

  async add(items: { entry: JournalRecord, reason: string }[]): Promise<void> {
    if (!items.length) return
    const lines = items.map(({ entry, reason }) => `${JSON.stringify({
      setAsideAt: new Date().toISOString(), reason, key: entry.key, layoutId: entry.layoutId, at: entry.at,
      type: entry.type, subject: entry.subject, payload: safeJson(entry.payloadJson),
    })}\n`).join('')
    const file = await open(this.path, 'a', 0o600)
    try {
      await file.write(lines)
      await file.datasync()
    } finally {
      await file.close()
    }
    this.count += items.length
  }

  /** The newest entries first, at most `limit`. */
  async recent(limit: number): Promise<SetAsideEntry[]> {
    let text: string
    try { text = await readFile(this.path, 'utf8') } catch { return [] }
    return text.split('\n').filter(Boolean).slice(-limit).reverse().map(line => safeJson(line) as SetAsideEntry)
  }
}

function safeJson(text: string): unknown {
  try { return JSON.parse(text) } catch { return { unreadable: text.slice(0, 200) } }
}
