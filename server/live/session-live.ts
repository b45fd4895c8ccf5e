import type { LiveSession } from '#shared/live/protocol'
import type { Database } from '../database/connection'

/** The running operating session of a layout, as the live runtime carries it (null when none runs). */
export async function runningLiveSession(db: Database, layoutId: number): Promise<LiveSession | null> {
  const row = await db.models.OperatingSession.findOne({ where: { layoutId, endedAt: null } })
  return row ? toLiveSession(row) : null
}

export function toLiveSession(row: { id: number, name: string, startedAt: Date, fastClockRatio: number, fastClockStart: string | null }): LiveSession {
  return { id: row.id, name: row.name, startedAt: row.startedAt.getTime(), fastClockRatio: Number(row.fastClockRatio), fastClockStart: row.fastClockStart ?? null }
}
