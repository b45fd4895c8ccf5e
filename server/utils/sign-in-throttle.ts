/**
 * Throttles failed sign-ins so that guessing is slow but a stranger cannot lock the owner out
 * (OWASP Authentication Cheat Sheet, "Account Lockout": count per account, lock for a while, and do
 * not let an attacker deny service to the account's owner):
 * - per account and client address: 5 failures in 15 minutes hold that pair for the rest of the window;
 * - per account from anywhere: 100 failures in an hour (ASVS 4.0.3 2.2.1 "no more than 100 failed attempts
 *   per hour" on one account; from memory), so a spread-out attack still crawls;
 * - per client address over all accounts: 20 failures in 15 minutes (one client trying many accounts).
 * Kept in memory: one server process holds it (a restart forgets it).
 */
export const THROTTLE_WINDOW_MS = 15 * 60_000
export const ACCOUNT_WINDOW_MS = 60 * 60_000
export const MAX_FAILURES_PER_PAIR = 5
export const MAX_FAILURES_PER_ACCOUNT = 100
export const MAX_FAILURES_PER_CLIENT = 20

const failures = new Map<string, number[]>()

interface Limit { key: string, max: number, windowMs: number }

function limits(email: string, client: string): Limit[] {
  return [
    { key: `pair:${email}|${client}`, max: MAX_FAILURES_PER_PAIR, windowMs: THROTTLE_WINDOW_MS },
    { key: `account:${email}`, max: MAX_FAILURES_PER_ACCOUNT, windowMs: ACCOUNT_WINDOW_MS },
    { key: `client:${client}`, max: MAX_FAILURES_PER_CLIENT, windowMs: THROTTLE_WINDOW_MS },
  ]
}

function recent({ key, windowMs }: Limit, now: number): number[] {
  const list = (failures.get(key) ?? []).filter(t => now - t < windowMs)
  if (list.length) failures.set(key, list)
  else failures.delete(key)
  return list
}

/** Seconds until another attempt is allowed, or 0 when allowed now. */
export function signInRetryAfter(email: string, client: string, now = Date.now()): number {
  let wait = 0
  for (const limit of limits(email, client)) {
    const list = recent(limit, now)
    if (list.length >= limit.max) wait = Math.max(wait, Math.ceil((list[list.length - limit.max]! + limit.windowMs - now) / 1000))
  }
  return wait
}

export function recordSignInFailure(email: string, client: string, now = Date.now()): void {
  for (const limit of limits(email, client)) failures.set(limit.key, [...recent(limit, now), now])
}

/** A right password from this address forgets this pair's failures (the per-account count stays). */
export function clearSignInFailures(email: string, client: string): void {
  failures.delete(`pair:${email}|${client}`)
}
