/**
 * Follows the MQTT byte stream packet by packet (fixed header: one type byte, then the remaining length as
 * up to four 7-bit groups, MQTT 3.1.1 §2.2.3) and answers false as soon as a packet announces more than
 * `maxBytes` after its fixed header, before its body arrives: the parser would otherwise buffer all of it.
 */
export function mqttPacketSizeGuard(maxBytes: number): (chunk: Buffer) => boolean {
  let state: 'type' | 'length' | 'body' = 'type'
  let length = 0
  let multiplier = 1
  let remaining = 0
  return (chunk) => {
    let i = 0
    while (i < chunk.length) {
      if (state === 'body') {
        const take = Math.min(remaining, chunk.length - i)
        remaining -= take
        i += take
        if (remaining === 0) state = 'type'
        continue
      }
      const byte = chunk[i++]!
      if (state === 'type') {
        state = 'length'
        length = 0
        multiplier = 1
        continue
      }
      length += (byte & 0x7f) * multiplier
      if (length > maxBytes) return false
      if (byte & 0x80) {
        multiplier *= 128
        if (multiplier > 128 ** 3) return false // a fifth length byte: malformed
        continue
      }
      remaining = length
      state = remaining > 0 ? 'body' : 'type'
    }
    return true
  }
}
