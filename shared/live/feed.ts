import type { Layout } from '../schemas/layout'
import type { FeedEntry, LiveChange } from './protocol'

/** Display names of a layout's items, falling back to the id. */
export type LayoutNames = ReturnType<typeof namesOf>

export function namesOf(layout: Layout) {
  const block = new Map(layout.blocks.map(b => [b.id, b.name]))
  const signal = new Map(layout.signals.map(s => [s.id, s.name]))
  const area = new Map(layout.areas.map(a => [a.id, a.name]))
  return {
    block: (id: string) => block.get(id) ?? id,
    signal: (id: string) => signal.get(id) ?? id,
    area: (id: string) => area.get(id) ?? id,
  }
}

/**
 * One line for the panel's feed of latest events, or null for changes too small to list (single
 * detector and indication changes are shown on the diagram itself). `n` comes from namesOf(layout), made once.
 */
export function describeChange(n: LayoutNames, change: LiveChange, userName: (id: string | undefined) => string | null, at: number): FeedEntry | null {
  const by = (id: string | undefined) => { const name = userName(id); return name ? ` by ${name}` : '' }
  switch (change.type) {
    case 'alarm':
      if (change.alarm.kind === 'turnout-under-lock') {
        const a = change.alarm
        const why = a.signal ? `${n.signal(a.signal)} was reading over it` : `${n.block(a.block)} was occupied${a.description ? ` by ${a.description}` : ''}`
        return { at, tone: 'alarm', text: `Turnout ${a.turnout} moved while locked: ${why}` }
      }
      return { at, tone: 'alarm', text: `Signal ${n.signal(change.alarm.signal)} passed at danger into ${n.block(change.alarm.block)}${change.alarm.description ? ` by ${change.alarm.description}` : ''}` }
    case 'alarm-acknowledged':
      return { at, tone: 'info', text: `Alarm at ${change.alarm.kind === 'spad' ? n.signal(change.alarm.signal) : `turnout ${change.alarm.turnout}`} acknowledged${by(change.alarm.acknowledgedBy)}` }
    case 'override':
      return { at, tone: 'info', text: `${n.signal(change.signal)} set to ${change.mode}${by(change.by)}` }
    case 'turnout':
      return { at, tone: 'info', text: `Turnout ${change.turnout} ${change.position}${by(change.by)}` }
    case 'description':
      if (change.reason === 'lost') return { at, tone: 'warn', text: `Description ${change.lost} lost: ${n.block(change.block)} cleared with no undescribed train ahead to move on to. Interpose it again where the train is.` }
      if (change.reason === 'interpose') return { at, tone: 'info', text: `${change.description ?? 'Description cleared'} in ${n.block(change.block)}${by(change.by)}` }
      return null
    case 'speed':
      return { at, tone: 'info', text: `${change.description} through ${n.block(change.block)} at ${Math.round(change.kmh)} km/h (${Math.round(change.mph)} mph) scale` }
    case 'dropout':
      return { at, tone: 'warn', text: `Detector ${change.detector} dropped out briefly in ${n.block(change.block)}: track or wheels may need cleaning` }
    case 'device':
      return { at, tone: change.status.online ? 'info' : 'warn', text: `Controller ${change.device} ${change.status.online ? 'online' : 'offline'}` }
    default:
      return null
  }
}
