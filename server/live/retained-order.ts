/**
 * Keeps a new subscription's retained messages from overtaking newer ones, for one connection.
 *
 * aedes makes a subscription live first and then sends the subscriber the stored retained messages of its
 * topics, one by one as the connection takes them. A message published meanwhile reaches the subscriber before
 * the stored copy of its topic, which then arrives last and is older: a device that subscribes just as the
 * signals change (the fake layout at start-up: it reports its turnouts and the signals clear at once) would keep
 * an indication of danger that Blockbell replaced a moment before, and wait at a green signal.
 *
 * The rule: once a connection has been sent a live message on a topic, a stored copy of that topic still to
 * come is that message or an older one, so it is dropped. Subscribing again to a filter asks for its stored
 * messages again (MQTT 3.1.1 §3.8.4), so it forgets the topics that filter matches. It remembers the last
 * few thousand topics only, so a device publishing ever new names cannot make the server's bridge hold more.
 */
export class RetainedOrder {
  /** Topics sent live, oldest first; at most `limit` (a connection's stored copies come within moments). */
  private readonly sentLive = new Set<string>()

  constructor(private readonly limit = 4096) {}

  /** A new subscription to `filter` on this connection (before its stored messages are sent). */
  subscribed(filter: string): void {
    for (const topic of this.sentLive) if (topicMatches(filter, topic)) this.sentLive.delete(topic)
  }

  /** Whether to send a message on `topic`: `stored` for a retained copy sent for a new subscription. */
  forward(topic: string, stored: boolean): boolean {
    if (stored) return !this.sentLive.has(topic)
    this.sentLive.delete(topic)
    this.sentLive.add(topic)
    if (this.sentLive.size > this.limit) this.sentLive.delete(this.sentLive.values().next().value!)
    return true
  }
}

/** Whether an MQTT topic filter (`+` one level, `#` the rest) matches a topic name (MQTT 3.1.1 §4.7). */
export function topicMatches(filter: string, topic: string): boolean {
  const f = filter.split('/')
  const t = topic.split('/')
  for (let i = 0; i < f.length; i++) {
    if (f[i] === '#') return i > 0 || !topic.startsWith('$')
    if (i >= t.length) return false
    if (f[i] === '+') {
      if (i === 0 && topic.startsWith('$')) return false
      continue
    }
    if (f[i] !== t[i]) return false
  }
  return f.length === t.length
}
