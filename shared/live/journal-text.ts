import type { JournalPayload } from '../types/sessions'
import type { LayoutNames } from './feed'

export interface JournalRowForText {
  type: string
  subject: string | null
  payload: JournalPayload
  /** Name of the person the entry was made by, if any. */
  person: string | null
}

const ACTION_WORDS: Record<string, string> = {
  'take-area': 'took', 'release-area': 'released', 'force-release': 'force-released', 'hand-over': 'handed over',
}

/**
 * One journal entry in words a person reads ("SU2 passed at danger by 1F23 entering UM3"). `personName`
 * turns a user id found inside a payload (acknowledgedBy, hand-over target) into a name.
 */
export function describeJournalRow(n: LayoutNames, row: JournalRowForText, personName: (id: unknown) => string | null): string {
  const p = row.payload ?? {}
  const by = row.person ? ` by ${row.person}` : ''
  switch (row.type) {
    case 'session-started': return `Session ${p.name ?? ''} started${by}`.replace('  ', ' ')
    case 'session-ended': return `Session ${p.name ?? ''} ended${by}`.replace('  ', ' ')
    case 'detector-input': return `Detector ${p.detector} reported ${p.occupied ? 'occupied' : 'clear'}`
    case 'turnout-input': return `Turnout ${p.turnout} reported ${p.position}`
    case 'detector': return `Detector ${p.detector} ${p.occupied ? 'occupied' : 'clear'} (${n.block(p.block)})`
    case 'block': return `${n.block(p.block)} ${p.occupied ? 'occupied' : 'clear'}`
    case 'indication': return `${n.signal(p.signal)} shows ${String(p.indication?.aspect ?? '').replace('-', ' ')}${p.indication?.indicator ? ` with junction indicator ${p.indication.indicator}` : ''}`
    case 'turnout': return `Turnout ${p.turnout} ${p.position}${by}`
    case 'override': return `${n.signal(p.signal)} set to ${p.mode}${by}`
    case 'description':
      if (p.reason === 'step') return `${p.description} stepped from ${n.block(p.from)} into ${n.block(p.block)}`
      if (p.reason === 'interpose') return p.description ? `${p.description} interposed in ${n.block(p.block)}${by}` : `Description in ${n.block(p.block)} cancelled${by}`
      return `Description cleared from ${n.block(p.block)}`
    case 'alarm': {
      const a = p.alarm ?? {}
      return `${n.signal(a.signal)} passed at danger${a.description ? ` by ${a.description}` : ''} entering ${n.block(a.block)}`
    }
    case 'alarm-acknowledged': {
      const a = p.alarm ?? {}
      const who = personName(a.acknowledgedBy) ?? row.person
      return `Alarm at ${n.signal(a.signal)} acknowledged${who ? ` by ${who}` : ''}`
    }
    case 'speed': return `${p.description} through ${n.block(p.block)} at ${Math.round(p.kmh)} km/h (${Math.round(p.mph)} mph) scale`
    case 'dropout': return `Detector ${p.detector} dropped out briefly in ${n.block(row.subject ?? '')}`
    case 'device': return `Controller ${row.subject} ${p.online ? 'online' : 'offline'}`
    case 'input-rejected': return `Input on ${row.subject} refused: ${p.reason}`
    case 'command': return describeCommand(n, p, row.person, personName)
    default: return `${row.type}${row.subject ? ` ${row.subject}` : ''}`
  }
}

function describeCommand(n: LayoutNames, p: JournalPayload, person: string | null, personName: (id: unknown) => string | null): string {
  const who = person ?? 'Someone'
  switch (p.action) {
    case 'take-area': case 'release-area': case 'force-release':
      return `${who} ${ACTION_WORDS[p.action]} ${n.area(p.area)}`
    case 'hand-over': return `${who} handed ${n.area(p.area)} over to ${personName(p.to) ?? 'another signaller'}`
    case 'set-override': return `${who} asked for ${n.signal(p.signal)} to be set to ${p.mode}`
    case 'set-turnout': return `${who} asked for turnout ${p.turnout} to go ${p.position}`
    case 'interpose': return p.description ? `${who} interposed ${p.description} in ${n.block(p.block)}` : `${who} cancelled the description in ${n.block(p.block)}`
    case 'acknowledge': return `${who} acknowledged alarm ${p.alarm}`
    default: return `${who}: ${p.action ?? 'command'}`
  }
}
