/**
 * When a maintenance task (dust the buildings, check a wiring joint, replace a bulb) is due. A task has a due
 * date, a repeat interval in days, or both: a one-off task is due on its date and finished once done; a
 * repeating one is due its interval after it was last done (before that: on its date, or its interval after
 * it was set). Due soon within `TASK_DUE_SOON_DAYS` — Blockbell's own choice, not a published figure.
 */
export const TASK_STATES = ['ok', 'due-soon', 'due', 'finished'] as const
export type TaskState = typeof TASK_STATES[number]

export const TASK_DUE_SOON_DAYS = 7
const DAY_MS = 86_400_000

export interface TaskTiming {
  /** 'YYYY-MM-DD' */
  dueOn: string | null
  repeatDays: number | null
  /** epoch ms */
  createdAt: number
  lastDoneAt: number | null
}

/** The day (UTC) the task is next due, as 'YYYY-MM-DD', or null for a one-off task already done. */
export function taskNextDue(t: TaskTiming): string | null {
  if (t.repeatDays === null) return t.lastDoneAt === null ? t.dueOn : null
  if (t.lastDoneAt !== null) return new Date(t.lastDoneAt + t.repeatDays * DAY_MS).toISOString().slice(0, 10)
  return t.dueOn ?? new Date(t.createdAt + t.repeatDays * DAY_MS).toISOString().slice(0, 10)
}

/** Whole days from today (UTC) to the due day: 0 = due today, negative = overdue. */
export function daysUntil(day: string, now: number): number {
  const today = Date.parse(new Date(now).toISOString().slice(0, 10))
  return Math.round((Date.parse(day) - today) / DAY_MS)
}

export function taskState(t: TaskTiming, now: number): { state: TaskState, nextDue: string | null } {
  const nextDue = taskNextDue(t)
  if (nextDue === null) return { state: 'finished', nextDue }
  const days = daysUntil(nextDue, now)
  return { state: days <= 0 ? 'due' : days <= TASK_DUE_SOON_DAYS ? 'due-soon' : 'ok', nextDue }
}
