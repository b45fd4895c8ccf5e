import type { H3Event } from 'h3'

/**
 * Addresses of reverse proxies whose X-Forwarded-Proto / X-Forwarded-For headers are believed
 * (BLOCKBELL_TRUSTED_PROXIES, comma-separated, e.g. `127.0.0.1,::1` for a proxy on the same machine).
 * From anyone else those headers are ignored: a client could otherwise claim any address or scheme.
 */
function trustedProxies(): string[] {
  return (process.env.BLOCKBELL_TRUSTED_PROXIES ?? '').split(',').map(s => s.trim()).filter(Boolean)
}

function peerAddress(event: H3Event): string {
  const address = event.node.req.socket?.remoteAddress ?? ''
  return address.startsWith('::ffff:') ? address.slice(7) : address
}

export function fromTrustedProxy(event: H3Event): boolean {
  const list = trustedProxies()
  return list.length > 0 && list.includes(peerAddress(event))
}

/** Whether the browser reached Blockbell over https: directly, or through a trusted proxy that says so. */
export function requestIsHttps(event: H3Event): boolean {
  return getRequestProtocol(event, { xForwardedProto: fromTrustedProxy(event) }) === 'https'
}

/**
 * The client's address: the socket's, or, behind a trusted proxy, the last X-Forwarded-For entry (the one
 * that proxy added; earlier entries come from the client and can say anything).
 */
export function clientAddress(event: H3Event): string {
  if (fromTrustedProxy(event)) {
    const last = getRequestHeader(event, 'x-forwarded-for')?.split(',').pop()?.trim()
    if (last) return last
  }
  return peerAddress(event) || 'unknown'
}

/**
 * Session cookie settings for this request: Secure only over https, so tablets on plain http on the
 * layout room's network can sign in at all (a browser drops a Secure cookie sent over http).
 */
export function sessionCookieFor(event: H3Event) {
  return { cookie: { secure: requestIsHttps(event) } }
}
