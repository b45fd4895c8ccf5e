import { describe, expect, it } from 'vitest'
import { devicePublishAllowed, deviceSubscribeAllowed, type BrokerIdentity } from '../../../server/live/device-access'
import { parseInputTopic, parseServerTopic, SERVER_FILTERS, serverTopics } from '#shared/live/topics'

// The topics between server processes are for servers only: no device of any kind may publish or subscribe
// them on the embedded broker, and no device topic can be read as one of them (or the other way round).
const devices: BrokerIdentity[] = [
  { kind: 'device', username: 'fake-layout', layout: 'wrenfold' },
  { kind: 'device', username: 'yard-board', layout: null },
  { kind: 'anonymous', username: null, layout: null },
]
const internal = [
  serverTopics.panels('wrenfold'), serverTopics.requests('wrenfold'), serverTopics.layouts, serverTopics.accounts,
  serverTopics.responses('hall-a'), serverTopics.status('hall-a'),
]

describe('topics between server processes', () => {
  it('are refused to every device for publishing and subscribing, filters and wildcards included', () => {
    for (const identity of devices) {
      for (const topic of internal) expect(devicePublishAllowed(topic, identity)).toBe(false)
      for (const filter of [...internal, ...SERVER_FILTERS, 'blockbell-servers/#', '#', '+/v1/#']) expect(deviceSubscribeAllowed(filter, identity)).toBe(false)
    }
  })

  it('are read back as what they are, and never as device inputs', () => {
    expect(parseServerTopic(serverTopics.panels('wrenfold'))).toEqual({ kind: 'panels', slug: 'wrenfold' })
    expect(parseServerTopic(serverTopics.requests('wrenfold'))).toEqual({ kind: 'requests', slug: 'wrenfold' })
    expect(parseServerTopic(serverTopics.responses('hall-b'))).toEqual({ kind: 'responses', instance: 'hall-b' })
    expect(parseServerTopic(serverTopics.layouts)).toEqual({ kind: 'layouts' })
    expect(parseServerTopic(serverTopics.accounts)).toEqual({ kind: 'accounts' })
    expect(parseServerTopic('blockbell-servers/v1/accounts/extra')).toBeNull()
    expect(parseServerTopic('blockbell/v1/wrenfold/detector/D01')).toBeNull()
    expect(parseServerTopic('blockbell-servers/v1/layout/wrenfold/panels/extra')).toBeNull()
    for (const topic of internal) expect(parseInputTopic(topic)).toBeNull()
  })
})
