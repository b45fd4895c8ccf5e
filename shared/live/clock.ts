import type { LiveSession } from './protocol'

const MINUTES_PER_DAY = 24 * 60

/** Model minutes that have passed since the session started: real elapsed time times the fast clock ratio. */
export function modelMinutesElapsed(session: Pick<LiveSession, 'startedAt' | 'fastClockRatio'>, now: number): number {
  const realMinutes = Math.max(0, now - session.startedAt) / 60_000
  return realMinutes * session.fastClockRatio
}

function parseClock(text: string | null): number | null {
  const m = text ? /^(\d{1,2}):(\d{2})$/.exec(text) : null
  if (!m) return null
  const h = Number(m[1])
  const min = Number(m[2])
  return h < 24 && min < 60 ? h * 60 + min : null
}

const pad = (n: number) => String(n).padStart(2, '0')

export interface ModelTime {
  /** "HH:MM" model time of day, or elapsed model time when the session has no start time of day. */
  text: string
  /** True when `text` is a time of day; false when it is time elapsed since the start. */
  timeOfDay: boolean
  /** Whole model days passed since the start (the clock runs past midnight). */
  days: number
}

/** The fast clock's reading at real time `now` (epoch ms). */
export function modelTime(session: LiveSession, now: number): ModelTime {
  const elapsed = Math.floor(modelMinutesElapsed(session, now))
  const start = parseClock(session.fastClockStart)
  const total = (start ?? 0) + elapsed
  const days = Math.floor(total / MINUTES_PER_DAY)
  const inDay = total - days * MINUTES_PER_DAY
  if (start === null) return { text: `${pad(Math.floor(elapsed / 60))}:${pad(elapsed % 60)}`, timeOfDay: false, days }
  return { text: `${pad(Math.floor(inDay / 60))}:${pad(inDay % 60)}`, timeOfDay: true, days }
}
