import { describe, expect, it } from 'vitest'
import {
  MAX_FAILURES_PER_ACCOUNT, MAX_FAILURES_PER_CLIENT, MAX_FAILURES_PER_PAIR, THROTTLE_WINDOW_MS,
  clearSignInFailures, recordSignInFailure, signInRetryAfter,
} from '../../../server/utils/sign-in-throttle'

// OWASP Authentication Cheat Sheet, "Account Lockout": count failures per account, but an attacker must not
// be able to lock the owner out; ASVS 4.0.3 2.2.1: at most 100 failed attempts per hour on one account.
let n = 0
const account = () => `throttle-${++n}@fernhollow.example`
const T0 = 1_700_000_000_000

describe('sign-in throttling', () => {
  it('holds an account and address pair after 5 failures, not the same account from another address', () => {
    const email = account()
    for (let i = 0; i < MAX_FAILURES_PER_PAIR; i++) {
      expect(signInRetryAfter(email, '192.0.2.7', T0 + i)).toBe(0)
      recordSignInFailure(email, '192.0.2.7', T0 + i)
    }
    expect(signInRetryAfter(email, '192.0.2.7', T0 + 10)).toBe(Math.ceil(THROTTLE_WINDOW_MS / 1000))
    expect(signInRetryAfter(email, '198.51.100.3', T0 + 10)).toBe(0)
    // The window slides: once the first failure is 15 minutes old, the pair may try again.
    expect(signInRetryAfter(email, '192.0.2.7', T0 + THROTTLE_WINDOW_MS)).toBe(0)
  })

  it('a right password from one address forgets that pair only', () => {
    const email = account()
    for (let i = 0; i < 4; i++) recordSignInFailure(email, '192.0.2.8', T0)
    clearSignInFailures(email, '192.0.2.8')
    recordSignInFailure(email, '192.0.2.8', T0)
    expect(signInRetryAfter(email, '192.0.2.8', T0)).toBe(0)
  })

  it('still slows a guess spread over many addresses: 100 per account in an hour', () => {
    const email = account()
    for (let i = 0; i < MAX_FAILURES_PER_ACCOUNT; i++) recordSignInFailure(email, `10.${i >> 8}.${i & 255}.1`, T0 + i)
    expect(signInRetryAfter(email, '203.0.113.200', T0 + 1000)).toBeGreaterThan(3000)
    expect(signInRetryAfter(account(), '203.0.113.200', T0 + 1000)).toBe(0)
  })

  it('holds one address trying many accounts after 20 failures', () => {
    for (let i = 0; i < MAX_FAILURES_PER_CLIENT; i++) recordSignInFailure(account(), '198.51.100.99', T0)
    expect(signInRetryAfter(account(), '198.51.100.99', T0 + 1)).toBeGreaterThan(0)
  })
})
