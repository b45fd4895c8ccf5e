/**
 * Throttles repeated failed sign-ins, per e-mail address and per client address, in a sliding window.
 * Kept in memory: one server process holds it (a restart forgets it).
 */
const THROTTLE_WINDOW_MS = 15 * 60_000
const MAX_FAILURES_PER_ACCOUNT = 5
const MAX_FAILURES_PER_CLIENT = 20

const failures = new Map<string, number[]>()

function recent(key: string, now: number): number[] {
  const list = (failures.get(key) ?? []).filter(t => now - t < THROTTLE_WINDOW_MS)
  if (list.length) failures.set(key, list)
  else failures.delete(key)
  return list
}

/** Seconds until another attempt is allowed, or 0 when allowed now. */
export function signInRetryAfter(email: string, client: string, now = Date.now()): number {
  const checks: [string, number][] = [[`account:${email}`, MAX_FAILURES_PER_ACCOUNT], [`client:${client}`, MAX_FAILURES_PER_CLIENT]]
  let wait = 0
  for (const [key, limit] of checks) {
    const list = recent(key, now)
    if (list.length >= limit) wait = Math.max(wait, Math.ceil((list[list.length - limit]! + THROTTLE_WINDOW_MS - now) / 1000))
  }
  return wait
}

export function recordSignInFailure(email: string, client: string, now = Date.now()): void {
  for (const key of [`account:${email}`, `client:${client}`]) failures.set(key, [...recent(key, now), now])
}

export function clearSignInFailures(email: string): void {
  failures.delete(`account:${email}`)
}
