/**
 * A small seeded pseudo-random generator (mulberry32: 32-bit state, period 2^32), so that the same seed
 * gives the same run of the fake layout. Not for anything that needs real randomness.
 */
export interface Random {
  /** A number in [0, 1). */
  next(): number
  /** True with probability `p` (0..1). */
  chance(p: number): boolean
  /** A number in [min, max). */
  between(min: number, max: number): number
  /** An integer in [0, n). */
  int(n: number): number
  /** One element of a non-empty array. */
  pick<T>(items: readonly T[]): T
}

export function createRandom(seed: number): Random {
  let a = seed >>> 0
  const next = (): number => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
  return {
    next,
    chance: p => p > 0 && next() < p,
    between: (min, max) => min + (max - min) * next(),
    int: n => Math.floor(next() * n),
    pick: items => items[Math.floor(next() * items.length)]!,
  }
}
