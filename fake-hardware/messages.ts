import type { Aspect } from '#shared/signalling'

/** Parsing of what the fake layout receives from Blockbell over MQTT. Bad payloads give null, never throw. */

const ASPECTS: readonly string[] = ['danger', 'caution', 'preliminary-caution', 'proceed']

function json(payload: string): unknown {
  try {
    return JSON.parse(payload)
  } catch {
    return undefined
  }
}

/** The aspect of a `signal/<id>` indication: JSON `{"aspect": ..., ...}`. */
export function parseIndication(payload: string): Aspect | null {
  const v = json(payload)
  if (typeof v !== 'object' || v === null) return null
  const aspect = (v as { aspect?: unknown }).aspect
  return typeof aspect === 'string' && ASPECTS.includes(aspect) ? (aspect as Aspect) : null
}

/** The override of a `signal/<id>` indication (hold, auto or clear), or null. */
export function parseOverride(payload: string): string | null {
  const v = json(payload)
  if (typeof v !== 'object' || v === null) return null
  const override = (v as { override?: unknown }).override
  return override === 'hold' || override === 'auto' || override === 'clear' ? override : null
}

/** An `area/<id>` message: JSON `{"held": true|false}`. */
export function parseAreaHeld(payload: string): boolean | null {
  const v = json(payload)
  if (typeof v !== 'object' || v === null) return null
  const held = (v as { held?: unknown }).held
  return typeof held === 'boolean' ? held : null
}

export interface TurnoutRequest {
  position: 'normal' | 'reverse'
  by: string | null
}

/** A `turnout/<id>/set` request: JSON `{"position": "normal"|"reverse", "by"?: string}`, or the bare word. */
export function parseTurnoutRequest(payload: string): TurnoutRequest | null {
  const word = payload.trim()
  if (word === 'normal' || word === 'reverse') return { position: word, by: null }
  const v = json(payload)
  if (typeof v !== 'object' || v === null) return null
  const { position, by } = v as { position?: unknown, by?: unknown }
  if (position !== 'normal' && position !== 'reverse') return null
  return { position, by: typeof by === 'string' ? by.slice(0, 80) : null }
}

/** The topic below the layout prefix, or null for a topic outside it. */
export function relativeTopic(prefix: string, topic: string): string | null {
  return topic.startsWith(prefix) ? topic.slice(prefix.length) : null
}
