/** "2 h 05 min", "4 min 10 s", "12 s": a length of time for people to read. */
export function formatDuration(seconds: number): string {
  const s = Math.max(0, Math.round(seconds))
  const h = Math.floor(s / 3600)
  const m = Math.floor((s % 3600) / 60)
  if (h) return `${h} h ${String(m).padStart(2, '0')} min`
  if (m) return `${m} min ${s % 60} s`
  return `${s} s`
}

/** A time of day on the 24-hour clock with seconds, in the reader's time zone. */
export function formatClock(iso: string | number): string {
  return new Date(iso).toLocaleTimeString(undefined, { hour: '2-digit', minute: '2-digit', second: '2-digit', hour12: false })
}

export function formatDateTime(iso: string | number): string {
  return new Date(iso).toLocaleString(undefined, { dateStyle: 'medium', timeStyle: 'short', hour12: false })
}
