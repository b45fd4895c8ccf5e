import { isRetainedInput, TOPIC_ROOT } from '#shared/live/topics'

/** Who an MQTT connection is, as the broker's permission checks need it. */
export interface BrokerIdentity {
  kind: 'server' | 'device' | 'anonymous'
  /** The device's username, which is also its device id in `device/<id>/status`; null for anonymous. */
  username: string | null
  /** The slug of the device's layout; null when it serves every layout (or is anonymous, in demo mode). */
  layout: string | null
}

const ROOT = TOPIC_ROOT.split('/')
const plainLevel = (level: string | undefined) => Boolean(level) && !/[+#$]/.test(level!)

function layoutLevelAllowed(level: string | undefined, identity: BrokerIdentity, wildcard: boolean): boolean {
  if (identity.layout !== null) return level === identity.layout
  return plainLevel(level) || (wildcard && level === '+')
}

/**
 * What a device may publish (docs/mqtt-topics.md): detector and turnout reports of its layout and its own
 * status. Only Blockbell itself sets signals and asks for turnouts to be thrown.
 */
export function devicePublishAllowed(topic: string, identity: BrokerIdentity): boolean {
  const parts = topic.split('/')
  if (parts[0] !== ROOT[0] || parts[1] !== ROOT[1] || !layoutLevelAllowed(parts[2], identity, false)) return false
  if ((parts[3] === 'detector' || parts[3] === 'turnout') && parts.length === 5) return plainLevel(parts[4])
  if (parts[3] === 'device' && parts[5] === 'status' && parts.length === 6) {
    return identity.kind === 'anonymous' ? plainLevel(parts[4]) : parts[4] === identity.username
  }
  return false
}

/** Topics a device may keep a retained message on: its turnouts' positions and its own status. */
export function deviceRetainAllowed(topic: string): boolean {
  return isRetainedInput(topic.split('/').slice(3).join('/'))
}

/**
 * What a device may subscribe to: its layout's signal indications, turnout requests and held areas, by id or
 * with `+` for the id. Nothing else: no `#`, no `$SYS`, no other layout, no other device's messages.
 */
export function deviceSubscribeAllowed(filter: string, identity: BrokerIdentity): boolean {
  const parts = filter.split('/')
  if (parts[0] !== ROOT[0] || parts[1] !== ROOT[1] || !layoutLevelAllowed(parts[2], identity, true)) return false
  const id = parts[4]
  const idAllowed = id === '+' || plainLevel(id)
  if (parts[3] === 'signal' && parts.length === 5) return idAllowed
  if (parts[3] === 'turnout' && parts[5] === 'set' && parts.length === 6) return idAllowed
  if (parts[3] === 'area' && parts.length === 5) return idAllowed
  return false
}
