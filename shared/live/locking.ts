import type { Layout } from '../schemas/layout'
import type { Indication, TurnoutLock } from '../signalling'
import { nameOf } from './diagram'

/** A turnout's lock as the panels receive it (free turnouts have none). */
export type TurnoutLockInfo = NonNullable<TurnoutLock>

const ASPECT_WORDS: Record<Indication['aspect'], string> = {
  'danger': 'danger', 'caution': 'caution', 'preliminary-caution': 'preliminary caution', 'proceed': 'proceed',
}

/**
 * Why a turnout cannot be thrown, in the words a refusal gives: "T3 is locked: UM2 is occupied" or
 * "T3 is locked: SU2 reads over it at caution — hold SU2 first".
 */
export function lockReason(turnout: string, lock: TurnoutLockInfo, indications: Record<string, Indication>): string {
  if (lock.reason === 'occupied') return `${turnout} is locked: ${lock.block} is occupied`
  const aspect = indications[lock.signal]?.aspect
  return `${turnout} is locked: ${lock.signal} reads over it${aspect ? ` at ${ASPECT_WORDS[aspect]}` : ''} — hold ${lock.signal} first`
}

/** What the signaller can do about a lock, naming the block or signal as the layout calls it. */
export function lockAdvice(def: Layout | null, lock: TurnoutLockInfo): string {
  if (lock.reason === 'occupied') {
    return `A train stands on ${nameOf(def?.blocks, lock.block)} (${lock.block}), over the turnout. Wait until it has cleared the block; the lock then comes off by itself.`
  }
  return `Set ${nameOf(def?.signals, lock.signal)} (${lock.signal}) to hold so that it shows danger, make sure no train is running towards it, throw the turnout, then set the signal back.`
}

/** A turnout that moved while locked, in words for the alarm banner. */
export function lockAlarmText(def: Layout | null, alarm: { turnout: string, block: string, signal: string | null, description: string | null }): string {
  const why = alarm.signal
    ? `${nameOf(def?.signals, alarm.signal)} (${alarm.signal}) was reading over it`
    : `${nameOf(def?.blocks, alarm.block)} (${alarm.block}) was occupied${alarm.description ? ` by ${alarm.description}` : ''}`
  return `Turnout ${alarm.turnout} moved while locked: ${why}. Check the layout before any train runs over it.`
}
