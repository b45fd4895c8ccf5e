/**
 * Counts requests per key in a sliding window (in memory, per server process) and says how long to wait
 * once a key has reached its limit.
 */
export interface RequestThrottle {
  /** Seconds until the next request under `key` is allowed; 0 when allowed now. */
  retryAfter: (key: string, now?: number) => number
  record: (key: string, now?: number) => void
}

export function createRequestThrottle(windowMs: number, limit: number): RequestThrottle {
  const seen = new Map<string, number[]>()
  const recent = (key: string, now: number) => {
    const list = (seen.get(key) ?? []).filter(t => now - t < windowMs)
    if (list.length) seen.set(key, list)
    else seen.delete(key)
    return list
  }
  return {
    retryAfter(key, now = Date.now()) {
      const list = recent(key, now)
      return list.length >= limit ? Math.max(1, Math.ceil((list[list.length - limit]! + windowMs - now) / 1000)) : 0
    },
    record(key, now = Date.now()) {
      seen.set(key, [...recent(key, now), now])
    },
  }
}

/** Forgotten-password requests: 3 per address and 20 per client (a club room may share one address) in 15 minutes. */
export const FORGOT_WINDOW_MS = 15 * 60_000
export const FORGOT_PER_ADDRESS = 3
export const FORGOT_PER_CLIENT = 20

export function createForgotThrottle() {
  const perAddress = createRequestThrottle(FORGOT_WINDOW_MS, FORGOT_PER_ADDRESS)
  const perClient = createRequestThrottle(FORGOT_WINDOW_MS, FORGOT_PER_CLIENT)
  return {
    /** Seconds to wait (0: go ahead, and the request is counted). */
    take(email: string, client: string, now = Date.now()): number {
      const wait = Math.max(perAddress.retryAfter(email, now), perClient.retryAfter(client, now))
      if (wait > 0) return wait
      perAddress.record(email, now)
      perClient.record(client, now)
      return 0
    },
  }
}
