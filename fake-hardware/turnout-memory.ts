import { existsSync, readFileSync, renameSync, writeFileSync } from 'node:fs'
import type { Layout } from '#shared/schemas/layout'

export type KnownPosition = 'normal' | 'reverse'

/**
 * Where the turnouts lie, kept in a small JSON file between runs: a real layout's turnouts stay where they
 * were left when its power goes off, so a restarted layout reports what Blockbell last saw, not a reset.
 * `positions` is null when nothing is known (no file yet, or one that cannot be read): the layout is then one
 * seen for the first time, and the simulation sets its trains' first routes before it reports anything
 * (SimulationOptions.turnouts). Known positions are ones Blockbell has seen, so the first routes are then set
 * only as the locks allow.
 */
export function readTurnoutMemory(path: string, layout: Layout): { positions: Record<string, KnownPosition> | null, note: string } {
  const firstTime = 'turnouts start normal, set for the trains\' first routes before they are reported'
  if (!existsSync(path)) return { positions: null, note: `no turnout positions kept in ${path} yet: ${firstTime}` }
  let parsed: unknown
  try {
    parsed = JSON.parse(readFileSync(path, 'utf8'))
  } catch (e) {
    return { positions: null, note: `ignoring ${path}: ${(e as Error).message}; ${firstTime}` }
  }
  const known = new Set(layout.turnouts.map(t => t.id))
  const positions: Record<string, KnownPosition> = {}
  if (parsed && typeof parsed === 'object' && !Array.isArray(parsed)) {
    for (const [id, position] of Object.entries(parsed)) {
      if (known.has(id) && (position === 'normal' || position === 'reverse')) positions[id] = position
    }
  }
  return { positions, note: `turnouts where they were left (${path}): ${Object.keys(positions).length} of ${known.size} known, the rest normal` }
}

/** Remembers each reported position; the file is replaced whole (written aside, then renamed). */
export function turnoutMemoryWriter(path: string, start: Record<string, KnownPosition>): (id: string, position: KnownPosition) => void {
  const positions = { ...start }
  return (id, position) => {
    if (positions[id] === position) return
    positions[id] = position
    writeFileSync(`${path}.tmp`, `${JSON.stringify(positions, null, 2)}\n`)
    renameSync(`${path}.tmp`, path)
  }
}
