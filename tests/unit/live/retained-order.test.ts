import { describe, expect, it } from 'vitest'
import { RetainedOrder, topicMatches } from '../../../server/live/retained-order'

describe('topic filters', () => {
  it('match as the MQTT 3.1.1 examples say (§4.7.1.2, §4.7.1.3, §4.7.2)', () => {
    // §4.7.1.2: "sport/tennis/player1/#" matches these three
    for (const t of ['sport/tennis/player1', 'sport/tennis/player1/ranking', 'sport/tennis/player1/score/wimbledon']) expect(topicMatches('sport/tennis/player1/#', t)).toBe(true)
    // "sport/#" also matches the singular "sport"; "#" matches every topic not starting with $
    expect(topicMatches('sport/#', 'sport')).toBe(true)
    expect(topicMatches('#', 'sport/tennis')).toBe(true)
    // §4.7.1.3: "sport/tennis/+" matches "sport/tennis/player1" but not "sport/tennis/player1/ranking";
    // "sport/+" does not match "sport" but matches "sport/"; "+/+" and "/+" match "/finance", "+" does not
    expect(topicMatches('sport/tennis/+', 'sport/tennis/player1')).toBe(true)
    expect(topicMatches('sport/tennis/+', 'sport/tennis/player1/ranking')).toBe(false)
    expect(topicMatches('sport/+', 'sport')).toBe(false)
    expect(topicMatches('sport/+', 'sport/')).toBe(true)
    expect(topicMatches('+/+', '/finance')).toBe(true)
    expect(topicMatches('/+', '/finance')).toBe(true)
    expect(topicMatches('+', '/finance')).toBe(false)
    // §4.7.2: wildcards at the first level do not match topics starting with $
    expect(topicMatches('#', '$SYS/broker/clients')).toBe(false)
    expect(topicMatches('+/monitor/Clients', '$SYS/monitor/Clients')).toBe(false)
    expect(topicMatches('$SYS/#', '$SYS/monitor/Clients')).toBe(true)
    expect(topicMatches('$SYS/monitor/+', '$SYS/monitor/Clients')).toBe(true)
    // Blockbell's own: a device's indication filter
    expect(topicMatches('blockbell/v1/wrenfold/signal/+', 'blockbell/v1/wrenfold/signal/SF1')).toBe(true)
    expect(topicMatches('blockbell/v1/wrenfold/signal/+', 'blockbell/v1/wrenfold/area/main')).toBe(false)
  })
})

describe('the order of stored and live messages on one connection', () => {
  const SF1 = 'blockbell/v1/wrenfold/signal/SF1'
  const SF3 = 'blockbell/v1/wrenfold/signal/SF3'

  it('drops a stored copy that comes after a live message on its topic, and sends the others', () => {
    const order = new RetainedOrder()
    order.subscribed('blockbell/v1/wrenfold/signal/+')
    expect(order.forward(SF1, false)).toBe(true) // SF1 clears while the stored indications are on their way
    expect(order.forward(SF3, true)).toBe(true) // SF3's stored indication: nothing newer was sent
    expect(order.forward(SF1, true)).toBe(false) // SF1's stored copy is the old danger
    expect(order.forward(SF1, false)).toBe(true)
  })

  it('sends the stored messages again for a new subscription to the same filter', () => {
    const order = new RetainedOrder()
    order.subscribed('blockbell/v1/wrenfold/signal/+')
    order.forward(SF1, false)
    order.subscribed('blockbell/v1/wrenfold/area/+')
    expect(order.forward(SF1, true)).toBe(false) // another filter: SF1's record stays
    order.subscribed('blockbell/v1/wrenfold/signal/+')
    expect(order.forward(SF1, true)).toBe(true)
  })

  it('remembers a bounded number of topics, the oldest forgotten first', () => {
    const order = new RetainedOrder(3)
    for (const id of ['D1', 'D2', 'D3', 'D1', 'D4']) order.forward(`detector/${id}`, false)
    expect(order.forward('detector/D2', true)).toBe(true) // forgotten: the oldest when D4 came
    expect(['D1', 'D3', 'D4'].map(id => order.forward(`detector/${id}`, true))).toEqual([false, false, false])
  })
})
