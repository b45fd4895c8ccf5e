import type { Layout } from '../schemas/layout'
import type { Alarm } from '../signalling/types'
import { nameOf } from './diagram'
import { lockAlarmText } from './locking'

/** What an alarm is about, in a few words: "SU3" or "turnout T3". */
export const alarmSubject = (alarm: Alarm): string => alarm.kind === 'spad' ? alarm.signal : `turnout ${alarm.turnout}`

/** Alarms still waiting for a signaller's acknowledgement, oldest first. */
export function openAlarms(alarms: Alarm[]): Alarm[] {
  return alarms.filter(a => a.acknowledgedAt === null).sort((a, b) => a.at - b.at)
}

/** The alarm in words, naming the signal (or turnout), the block and the train from the layout definition. */
export function alarmText(def: Layout | null, alarm: Alarm): string {
  if (alarm.kind === 'turnout-under-lock') return lockAlarmText(def, alarm)
  const signal = `${nameOf(def?.signals, alarm.signal)} (${alarm.signal})`
  const block = `${nameOf(def?.blocks, alarm.block)} (${alarm.block})`
  const train = alarm.description ? `Train ${alarm.description}` : 'An undescribed train'
  return `Signal passed at danger: ${signal}. ${train} entered ${block}.`
}

/** The name behind a change's `by` (the server sends the person's id as text), if that person is known. */
export function personName(by: string | undefined, people: { id: number, name: string }[]): string | null {
  if (by === undefined) return null
  return people.find(p => String(p.id) === by)?.name ?? null
}
