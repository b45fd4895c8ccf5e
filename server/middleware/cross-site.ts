import type { H3Event } from 'h3'

// Cross-site request forgery defence for every state-changing request (OWASP ASVS 5.0 V3.5, and the same
// Origin rule the WebSocket handshake applies):
// 1. A browser's request must come from this site: an allowed Origin, or Sec-Fetch-Site same-origin/none.
//    A request with neither header is not from a browser page (curl, scripts, devices) and is let through,
//    as Go's net/http CrossOriginProtection does.
// 2. The API takes JSON bodies only. A form post (urlencoded, multipart, text/plain) is one a foreign page
//    can send without a CORS preflight; JSON is not. The file uploads below take multipart/form-data, and
//    rely on rule 1 alone (a browser always sends Origin or Sec-Fetch-Site with a cross-site form post).
const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS'])
const FILE_UPLOADS = [/^\/api\/layouts\/import(?:\?|$)/, /^\/api\/uploads(?:\?|$)/]

function sameSite(event: H3Event): boolean {
  const origin = getRequestHeader(event, 'origin')
  const fetchSite = getRequestHeader(event, 'sec-fetch-site')
  if (origin && origin !== 'null' && originAllowed(new Headers({ origin, host: getRequestHeader(event, 'host') ?? '' }))) return true
  if (fetchSite) return fetchSite === 'same-origin' || fetchSite === 'none'
  return !origin
}

function hasBody(event: H3Event): boolean {
  const length = getRequestHeader(event, 'content-length')
  return Boolean(getRequestHeader(event, 'transfer-encoding')) || (length !== undefined && length !== '0')
}

export default defineEventHandler((event) => {
  if (SAFE_METHODS.has(event.method)) return
  if (!sameSite(event)) {
    throw createError({ statusCode: 403, statusMessage: 'Forbidden', message: 'Refused: this request came from another site. Use Blockbell from its own address.' })
  }
  if (!event.path.startsWith('/api/')) return
  const type = getRequestHeader(event, 'content-type')
  const json = type !== undefined && /^application\/(?:[\w.+-]+\+)?json\s*(?:;|$)/i.test(type)
  if (json || (type === undefined && !hasBody(event))) return
  if (type && /^multipart\/form-data\s*;/i.test(type) && FILE_UPLOADS.some(route => route.test(event.path))) return
  throw createError({ statusCode: 415, statusMessage: 'Unsupported Media Type', message: 'The request body must be JSON: send it with Content-Type: application/json.' })
})
