/**
 * Device sign-in on the broker: failures throttled per username and client address pair, per address, and
 * (more slowly) per username, in a sliding window (OWASP Authentication Cheat Sheet, "Login Throttling"), so
 * guessing from one address cannot lock a device out from its own. Password checks run one at a time with
 * a short queue. Password hashing (scrypt) runs on libuv's small thread pool, which web sign-in shares: a
 * flood of device attempts must not take all of it.
 */
export interface DeviceSignInLimits {
  windowMs: number
  perPair: number
  perAddress: number
  perUsername: number
  /** Checks waiting for their turn before further attempts are refused at once. */
  maxWaiting: number
}

export const DEVICE_SIGN_IN_LIMITS: DeviceSignInLimits = { windowMs: 5 * 60_000, perPair: 10, perAddress: 30, perUsername: 100, maxWaiting: 8 }

/** `unavailable`: the check itself failed (e.g. the database is away); not counted as a failure. */
export type DeviceSignInResult = 'ok' | 'wrong' | 'throttled' | 'busy' | 'unavailable'

export class DeviceSignInGuard {
  private failures = new Map<string, number[]>()
  private pending = new Map<string, number>()
  private waiting = 0
  private tail: Promise<unknown> = Promise.resolve()

  constructor(private readonly limits = DEVICE_SIGN_IN_LIMITS, private readonly now = () => Date.now()) {}

  /** Runs `verify` (true when the password is right) unless the attempt is throttled or the queue is full. */
  async attempt(username: string, address: string, verify: () => Promise<boolean>): Promise<DeviceSignInResult> {
    const keys: [string, number][] = [
      [`pair:${username}@${address}`, this.limits.perPair],
      [`address:${address}`, this.limits.perAddress],
      [`user:${username}`, this.limits.perUsername],
    ]
    // Attempts still being checked count as failures: parallel guesses cannot slip in under the limit.
    if (keys.some(([key, limit]) => this.recent(key).length + (this.pending.get(key) ?? 0) >= limit)) return 'throttled'
    if (this.waiting >= this.limits.maxWaiting) return 'busy'
    this.waiting++
    for (const [key] of keys) this.pending.set(key, (this.pending.get(key) ?? 0) + 1)
    const turn = this.tail.then(verify).then(ok => ok, () => null)
    this.tail = turn
    try {
      const ok = await turn
      if (ok === null) return 'unavailable'
      if (ok) this.failures.delete(`pair:${username}@${address}`)
      else for (const [key] of keys) this.failures.set(key, [...this.recent(key), this.now()])
      return ok ? 'ok' : 'wrong'
    } finally {
      this.waiting--
      for (const [key] of keys) {
        const left = (this.pending.get(key) ?? 1) - 1
        if (left > 0) this.pending.set(key, left)
        else this.pending.delete(key)
      }
    }
  }

  private recent(key: string): number[] {
    const since = this.now() - this.limits.windowMs
    const list = (this.failures.get(key) ?? []).filter(t => t > since)
    if (list.length) this.failures.set(key, list)
    else this.failures.delete(key)
    return list
  }
}
