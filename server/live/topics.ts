import type { Indication } from '#shared/signalling'

/** Blockbell's MQTT topics (docs/mqtt-topics.md): everything of one layout lives under this prefix. */
export const TOPIC_ROOT = 'blockbell/v1'
export const layoutPrefix = (slug: string) => `${TOPIC_ROOT}/${slug}/`

/** Topic filters the bridge subscribes to, for every layout. */
export const INPUT_FILTERS = [`${TOPIC_ROOT}/+/detector/+`, `${TOPIC_ROOT}/+/turnout/+`, `${TOPIC_ROOT}/+/device/+/status`]

export type InputTopic =
  | { kind: 'detector', layout: string, id: string }
  | { kind: 'turnout', layout: string, id: string }
  | { kind: 'device-status', layout: string, id: string }

/** Reads an input topic, or null for anything else (our own outputs included). */
export function parseInputTopic(topic: string): InputTopic | null {
  const parts = topic.split('/')
  if (parts[0] !== 'blockbell' || parts[1] !== 'v1' || !parts[2]) return null
  const [, , layout, kind, id, rest] = parts
  if (!id) return null
  if (kind === 'detector' && parts.length === 5) return { kind: 'detector', layout: layout!, id }
  if (kind === 'turnout' && parts.length === 5) return { kind: 'turnout', layout: layout!, id }
  if (kind === 'device' && rest === 'status' && parts.length === 6) return { kind: 'device-status', layout: layout!, id }
  return null
}

export const signalTopic = (slug: string, signal: string) => `${layoutPrefix(slug)}signal/${signal}`
export const turnoutSetTopic = (slug: string, turnout: string) => `${layoutPrefix(slug)}turnout/${turnout}/set`

export function signalPayload(indication: Indication, at: number): string {
  return JSON.stringify({ aspect: indication.aspect, indicator: indication.indicator, override: indication.override, exceedsLine: indication.exceedsLine, at })
}
