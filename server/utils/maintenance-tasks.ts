import { createError } from 'h3'
import { QueryTypes, type Sequelize } from 'sequelize'
import { taskState } from '#shared/maintenance/tasks'
import type { TaskInput } from '#shared/schemas/maintenance'
import type { MaintenanceTask, TaskLogEntry } from '#shared/types/maintenance'

interface TaskRow {
  id: number
  title: string
  notes: string | null
  assignee_id: number | null
  assignee_name: string | null
  due_on: string | null
  repeat_days: number | null
  created_at: Date
  last_done_at: Date | null
  done_count: number
}

const taskMissing = (id: number) => createError({ statusCode: 404, message: `id: no task with id ${id}` })

/** The tasks of a layout (or of every layout), most urgent first; finished one-off tasks last. */
export async function listMaintenanceTasks(sequelize: Sequelize, layoutId: number | null, now = Date.now()): Promise<(MaintenanceTask & { layoutId: number })[]> {
  const rows = await sequelize.query<TaskRow & { layout_id: number }>(`
    SELECT t.id, t.layout_id, t.title, t.notes, t.assignee_id, u.name AS assignee_name, to_char(t.due_on, 'YYYY-MM-DD') AS due_on,
      t.repeat_days, t.created_at, (SELECT max(l.done_at) FROM maintenance_task_log l WHERE l.task_id = t.id) AS last_done_at,
      (SELECT count(*)::int FROM maintenance_task_log l WHERE l.task_id = t.id) AS done_count
    FROM maintenance_tasks t LEFT JOIN users u ON u.id = t.assignee_id
    WHERE (CAST(:layoutId AS integer) IS NULL OR t.layout_id = :layoutId)
  `, { replacements: { layoutId }, type: QueryTypes.SELECT })
  const order = { 'due': 0, 'due-soon': 1, 'ok': 2, 'finished': 3 }
  return rows.map((r) => {
    const { state, nextDue } = taskState({ dueOn: r.due_on, repeatDays: r.repeat_days, createdAt: r.created_at.getTime(), lastDoneAt: r.last_done_at?.getTime() ?? null }, now)
    return {
      id: r.id, layoutId: r.layout_id, title: r.title, notes: r.notes,
      assignee: r.assignee_id !== null ? { id: r.assignee_id, name: r.assignee_name ?? '' } : null,
      dueOn: r.due_on, repeatDays: r.repeat_days, lastDoneAt: r.last_done_at?.toISOString() ?? null, doneCount: r.done_count, nextDue, state,
    }
  }).sort((a, b) => order[a.state] - order[b.state] || (a.nextDue ?? '').localeCompare(b.nextDue ?? '') || a.id - b.id)
}

/** An assignee must be an active account; `keep` (the task's present assignee) may stay even once disabled. */
async function checkAssignee(sequelize: Sequelize, assigneeId: number | null | undefined, keep: number | null = null) {
  if (!assigneeId || assigneeId === keep) return
  const [user] = await sequelize.query<{ id: number }>('SELECT id FROM users WHERE id = :id AND disabled_at IS NULL', { replacements: { id: assigneeId }, type: QueryTypes.SELECT })
  if (!user) throw createError({ statusCode: 400, message: `assigneeId: no active account with id ${assigneeId}` })
}

const taskValues = (input: TaskInput) => ({
  title: input.title, notes: input.notes || null, assignee: input.assigneeId ?? null, dueOn: input.dueOn ?? null, repeatDays: input.repeatDays ?? null,
})

export async function createMaintenanceTask(sequelize: Sequelize, layoutId: number, input: TaskInput): Promise<number> {
  await checkAssignee(sequelize, input.assigneeId)
  const [row] = await sequelize.query<{ id: number }>(`
    INSERT INTO maintenance_tasks (layout_id, title, notes, assignee_id, due_on, repeat_days)
    VALUES (:layoutId, :title, :notes, :assignee, :dueOn, :repeatDays) RETURNING id
  `, { replacements: { layoutId, ...taskValues(input) }, type: QueryTypes.SELECT })
  return row!.id
}

/**
 * Changes what a task is, when and for whom. Its done log stays: the next due day is worked out again from
 * the last time it was done (a one-off task already done stays done).
 */
export async function updateMaintenanceTask(sequelize: Sequelize, id: number, input: TaskInput): Promise<void> {
  const [task] = await sequelize.query<{ assignee_id: number | null }>('SELECT assignee_id FROM maintenance_tasks WHERE id = :id', { replacements: { id }, type: QueryTypes.SELECT })
  if (!task) throw taskMissing(id)
  await checkAssignee(sequelize, input.assigneeId, task.assignee_id)
  const [, count] = await sequelize.query(`
    UPDATE maintenance_tasks SET title = :title, notes = :notes, assignee_id = :assignee, due_on = :dueOn, repeat_days = :repeatDays WHERE id = :id
  `, { replacements: { id, ...taskValues(input) }, type: QueryTypes.UPDATE })
  if (!count) throw taskMissing(id)
}

/** Removes a task for good with its done log (cascade); answers how many log entries went with it. */
export async function deleteMaintenanceTask(sequelize: Sequelize, id: number): Promise<{ doneEntries: number }> {
  const [row] = await sequelize.query<{ done_entries: number }>(`
    WITH gone AS (DELETE FROM maintenance_tasks WHERE id = :id RETURNING id)
    SELECT (SELECT count(*)::int FROM maintenance_task_log l WHERE l.task_id IN (SELECT id FROM gone)) AS done_entries FROM gone
  `, { replacements: { id }, type: QueryTypes.SELECT })
  if (!row) throw taskMissing(id)
  return { doneEntries: row.done_entries }
}

export async function recordTaskDone(sequelize: Sequelize, id: number, note: string | undefined, userId: number, now = new Date()): Promise<number> {
  const [task] = await sequelize.query<{ id: number }>('SELECT id FROM maintenance_tasks WHERE id = :id', { replacements: { id }, type: QueryTypes.SELECT })
  if (!task) throw taskMissing(id)
  const [row] = await sequelize.query<{ id: number }>(
    'INSERT INTO maintenance_task_log (task_id, done_at, done_by, note) VALUES (:id, :now, :userId, :note) RETURNING id',
    { replacements: { id, now, userId, note: note || null }, type: QueryTypes.SELECT })
  return row!.id
}

export async function listTaskLog(sequelize: Sequelize, id: number): Promise<TaskLogEntry[]> {
  const [task] = await sequelize.query<{ id: number }>('SELECT id FROM maintenance_tasks WHERE id = :id', { replacements: { id }, type: QueryTypes.SELECT })
  if (!task) throw taskMissing(id)
  const rows = await sequelize.query<{ id: number, done_at: Date, name: string | null, note: string | null }>(`
    SELECT l.id, l.done_at, u.name, l.note FROM maintenance_task_log l LEFT JOIN users u ON u.id = l.done_by
    WHERE l.task_id = :id ORDER BY l.done_at DESC, l.id DESC LIMIT 100
  `, { replacements: { id }, type: QueryTypes.SELECT })
  return rows.map(r => ({ id: r.id, at: r.done_at.toISOString(), by: r.name, note: r.note }))
}
