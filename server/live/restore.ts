import { QueryTypes } from 'sequelize'
import type { Layout } from '#shared/schemas/layout'
import { initialState, type Alarm, type LayoutState, type OverrideMode, type TurnoutPosition } from '#shared/signalling'
import type { AreaHolders, LiveUser } from '#shared/live/protocol'
import type { Database } from '../database/connection'

interface LatestRow { type: string, subject: string, payload: Record<string, unknown>, at: Date, user_id: number | null }

const RESTORED_ALARMS = 100

/**
 * Rebuilds a layout's live state after a restart from the journal: the last known detector states,
 * turnout positions, overrides, train descriptions, alarms and area holders. Turnout positions reported
 * since (retained MQTT messages) and fresh detector reports then correct it as they arrive.
 */
export async function restoreLayoutState(db: Database, layoutId: number, layout: Layout): Promise<{ state: LayoutState, areas: AreaHolders }> {
  const state = initialState(layout)
  const latest = await db.sequelize.query<LatestRow>(`
    SELECT DISTINCT ON (type, subject) type, subject, payload, at, user_id FROM events
    WHERE layout_id = :layoutId AND type IN ('detector', 'turnout', 'override', 'description', 'command') AND subject IS NOT NULL
    ORDER BY type, subject, id DESC`, { replacements: { layoutId }, type: QueryTypes.SELECT })
  const alarms = await db.sequelize.query<LatestRow>(`
    SELECT type, subject, payload, at, user_id FROM events
    WHERE layout_id = :layoutId AND type IN ('alarm', 'alarm-acknowledged') ORDER BY id DESC LIMIT ${RESTORED_ALARMS * 2}`,
  { replacements: { layoutId }, type: QueryTypes.SELECT })
  const [{ count }] = await db.sequelize.query<{ count: string }>(`SELECT count(*) FROM events WHERE layout_id = :layoutId AND type = 'alarm'`, { replacements: { layoutId }, type: QueryTypes.SELECT }) as [{ count: string }]

  const blockOf = new Map(layout.blocks.flatMap(b => b.detectors.map(d => [d, b.id] as const)))
  const areaIds = new Set(layout.areas.map(a => a.id))
  const areaRows: LatestRow[] = []
  for (const row of latest) {
    const p = row.payload
    if (row.type === 'detector' && row.subject in state.detectors) {
      state.detectors[row.subject] = Boolean(p.occupied)
      const block = blockOf.get(row.subject)!
      if (p.occupied) { state.occupied[block] = true; state.enteredAt[block] ??= new Date(row.at).getTime() }
    } else if (row.type === 'turnout' && row.subject in state.turnouts) {
      state.turnouts[row.subject] = p.position as TurnoutPosition
      state.turnoutRevisions[row.subject] = Number(p.revision) || 0
    } else if (row.type === 'override' && row.subject in state.overrides) {
      state.overrides[row.subject] = p.mode as OverrideMode
      state.signalRevisions[row.subject] = Number(p.revision) || 0
    } else if (row.type === 'description' && row.subject in state.occupied && typeof p.description === 'string') {
      state.descriptions[row.subject] = p.description
    } else if (row.type === 'command' && areaIds.has(row.subject)) {
      areaRows.push(row)
    }
  }
  // A description stays only where a train still stands.
  for (const block of Object.keys(state.descriptions)) if (!state.occupied[block]) delete state.descriptions[block]

  const byId = new Map<string, Alarm>()
  for (const row of [...alarms].reverse()) {
    const alarm = row.payload.alarm as Alarm | undefined
    if (alarm?.id) byId.set(alarm.id, alarm)
  }
  state.alarms = [...byId.values()].slice(-RESTORED_ALARMS)
  state.alarmCount = Number(count)

  return { state, areas: await restoreAreas(db, layout, areaRows) }
}

async function restoreAreas(db: Database, layout: Layout, rows: LatestRow[]): Promise<AreaHolders> {
  const holders: AreaHolders = Object.fromEntries(layout.areas.map(a => [a.id, null]))
  for (const row of rows) {
    const action = row.payload.action
    // a hand-over is an offer (the giver keeps the area until the receiver accepts); older entries moved it at once
    const holderId = action === 'take-area' || action === 'accept-hand-over'
      ? row.user_id
      : action === 'hand-over' ? (row.payload.offer ? row.user_id : Number(row.payload.to)) : null
    if (!holderId) continue
    const user = await db.models.User.findByPk(holderId)
    if (user && !user.disabledAt) holders[row.subject] = { id: user.id, name: user.name, role: user.role } satisfies LiveUser
  }
  return holders
}
