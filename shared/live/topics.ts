import type { Indication } from '../signalling'

/**
 * Blockbell's MQTT topics (docs/mqtt-topics.md), the one place they are spelt: the server's bridge, the fake
 * layout and its simulation all build and read them here. Everything of one layout lives under its prefix;
 * `relative` names a topic below that prefix, `layoutTopic` gives the full name.
 */
export const TOPIC_ROOT = 'blockbell/v1'
export const layoutPrefix = (slug: string) => `${TOPIC_ROOT}/${slug}/`

export const relative = {
  detector: (id: string) => `detector/${id}`,
  turnout: (id: string) => `turnout/${id}`,
  turnoutSet: (id: string) => `turnout/${id}/set`,
  signal: (id: string) => `signal/${id}`,
  deviceStatus: (id: string) => `device/${id}/status`,
  area: (id: string) => `area/${id}`,
} as const

export const layoutTopic = (slug: string, relativeTopic: string) => layoutPrefix(slug) + relativeTopic
export const signalTopic = (slug: string, signal: string) => layoutTopic(slug, relative.signal(signal))
export const turnoutSetTopic = (slug: string, turnout: string) => layoutTopic(slug, relative.turnoutSet(turnout))
export const areaTopic = (slug: string, area: string) => layoutTopic(slug, relative.area(area))

/** Topic filters the server's bridge subscribes to, for every layout. */
export const INPUT_FILTERS = [relative.detector('+'), relative.turnout('+'), relative.deviceStatus('+')].map(t => `${TOPIC_ROOT}/+/${t}`)

/** Topic filters a layout's hardware subscribes to: signal indications, throw requests and which areas a signaller holds. */
export const HARDWARE_FILTERS = (slug: string) => [layoutTopic(slug, relative.signal('+')), layoutTopic(slug, relative.turnoutSet('+')), layoutTopic(slug, relative.area('+'))]

export type InputTopic
  = | { kind: 'detector', layout: string, id: string }
    | { kind: 'turnout', layout: string, id: string }
    | { kind: 'device-status', layout: string, id: string }

/** Reads an input topic, or null for anything else (our own outputs included). */
export function parseInputTopic(topic: string): InputTopic | null {
  const parts = topic.split('/')
  if (`${parts[0]}/${parts[1]}` !== TOPIC_ROOT || !parts[2]) return null
  const [, , layout, kind, id, rest] = parts
  if (!id) return null
  if (kind === 'detector' && parts.length === 5) return { kind: 'detector', layout: layout!, id }
  if (kind === 'turnout' && parts.length === 5) return { kind: 'turnout', layout: layout!, id }
  if (kind === 'device' && rest === 'status' && parts.length === 6) return { kind: 'device-status', layout: layout!, id }
  return null
}

/** The turnout a `turnout/<id>/set` topic (relative to the layout prefix) asks to throw, or null. */
export function turnoutSetOf(relativeTopic: string): string | null {
  return /^turnout\/([^/]+)\/set$/.exec(relativeTopic)?.[1] ?? null
}

/** The signal a `signal/<id>` topic (relative to the layout prefix) carries, or null. */
export function signalOf(relativeTopic: string): string | null {
  return /^signal\/([^/]+)$/.exec(relativeTopic)?.[1] ?? null
}

/** The area an `area/<id>` topic (relative to the layout prefix) tells about, or null. */
export function areaOf(relativeTopic: string): string | null {
  return /^area\/([^/]+)$/.exec(relativeTopic)?.[1] ?? null
}

/** Whether an area is held by a signaller: JSON `{"held": true|false}`, retained (who holds it is not sent). */
export const areaPayload = (held: boolean) => JSON.stringify({ held })

/** Whether a relative topic is one the hardware reports as retained: a turnout position or a device status. */
export const isRetainedInput = (relativeTopic: string) => /^turnout\/[^/]+$/.test(relativeTopic) || relativeTopic.startsWith('device/')

export function signalPayload(indication: Indication, at: number): string {
  return JSON.stringify({ aspect: indication.aspect, indicator: indication.indicator, override: indication.override, exceedsLine: indication.exceedsLine, at })
}

/**
 * Topics between Blockbell server processes sharing one broker (several processes, one owner per layout),
 * under a root of their own so no device topic can match them. Devices must never publish or subscribe
 * here: the embedded broker allows devices only the `blockbell/v1/...` topics above, and an external
 * broker's ACL must keep them off `blockbell-servers/#` (README).
 */
export const SERVER_TOPIC_ROOT = 'blockbell-servers/v1'
export const serverTopics = {
  /** Every message the owner sends a layout's panels (snapshots, deltas with their seq), with its epoch. */
  panels: (slug: string) => `${SERVER_TOPIC_ROOT}/layout/${slug}/panels`,
  /** Requests to a layout's owner (MQTT 5 request/response: response topic and correlation data). */
  requests: (slug: string) => `${SERVER_TOPIC_ROOT}/layout/${slug}/requests`,
  /** Layout saved, made, archived: every process follows. */
  layouts: `${SERVER_TOPIC_ROOT}/layouts`,
  /** A person signed out or an account's sessions ended (disabled, password, role): every process acts. */
  accounts: `${SERVER_TOPIC_ROOT}/accounts`,
  /** Where a process takes its answers. */
  responses: (instance: string) => `${SERVER_TOPIC_ROOT}/instance/${instance}/responses`,
  /** Retained `online` / `offline` (last will) of a process. */
  status: (instance: string) => `${SERVER_TOPIC_ROOT}/instance/${instance}/status`,
} as const

/** Filters every server process subscribes to. */
export const SERVER_FILTERS = [`${SERVER_TOPIC_ROOT}/layout/+/panels`, `${SERVER_TOPIC_ROOT}/layout/+/requests`, `${SERVER_TOPIC_ROOT}/layouts`, `${SERVER_TOPIC_ROOT}/accounts`, `${SERVER_TOPIC_ROOT}/instance/+/status`]

/** Input topics of one layout (the owner's own subscription). */
export const layoutInputFilters = (slug: string) => [relative.detector('+'), relative.turnout('+'), relative.deviceStatus('+')].map(t => layoutTopic(slug, t))

export type ServerTopic
  = | { kind: 'panels' | 'requests', slug: string }
    | { kind: 'layouts' | 'accounts' }
    | { kind: 'responses' | 'status', instance: string }

export function parseServerTopic(topic: string): ServerTopic | null {
  if (!topic.startsWith(`${SERVER_TOPIC_ROOT}/`)) return null
  const parts = topic.slice(SERVER_TOPIC_ROOT.length + 1).split('/')
  if ((parts[0] === 'layouts' || parts[0] === 'accounts') && parts.length === 1) return { kind: parts[0] }
  if (parts.length !== 3 || !parts[1]) return null
  if (parts[0] === 'layout' && (parts[2] === 'panels' || parts[2] === 'requests')) return { kind: parts[2], slug: parts[1] }
  if (parts[0] === 'instance' && (parts[2] === 'responses' || parts[2] === 'status')) return { kind: parts[2], instance: parts[1] }
  return null
}
