import { request } from 'node:http'
import { describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import { BASE_URL, DEMO, SessionClient, signedIn, unique } from '../support/http-client'

// What the server answers depending on how a request reached it: which address it came from (127.0.0.x are
// all this machine's loopback), the Host a tablet used, and what a reverse proxy says about https.
// scripts/test.sh sets BLOCKBELL_TRUSTED_PROXIES=127.0.0.3: only that address stands for a trusted proxy.
await setup({ host: BASE_URL })

interface RawReply { status: number, headers: Record<string, string | string[] | undefined>, body: string }

function send(method: string, path: string, { from = '127.0.0.1', headers = {}, body }: { from?: string, headers?: Record<string, string>, body?: unknown } = {}): Promise<RawReply> {
  const url = new URL(BASE_URL)
  const payload = body === undefined ? undefined : JSON.stringify(body)
  return new Promise((resolve, reject) => {
    const req = request({
      host: url.hostname, port: url.port, path, method, localAddress: from,
      headers: { accept: 'application/json', ...(payload ? { 'content-type': 'application/json', 'content-length': String(Buffer.byteLength(payload)) } : {}), ...headers },
    }, (res) => {
      let text = ''
      res.on('data', (chunk) => { text += chunk })
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: text }))
    })
    req.on('error', reject)
    req.end(payload)
  })
}

const sessionCookie = (reply: RawReply) => ([] as string[]).concat(reply.headers['set-cookie'] ?? []).find(c => c.startsWith('blockbell-session=') && !/max-age=0/i.test(c))

describe('the session cookie on plain http and behind an https proxy', () => {
  const signIn = (options: Parameters<typeof send>[2]) => send('POST', '/api/auth/sign-in', { ...options, body: { email: DEMO.viewer.email, password: DEMO.viewer.password } })

  it('a tablet on http://<laptop name>:3000 gets a cookie without Secure (else its browser would drop it)', async () => {
    const reply = await signIn({ from: '127.0.0.1', headers: { host: 'clubroom-laptop.fernhollow.example:3000' } })
    expect(reply.status).toBe(200)
    const cookie = sessionCookie(reply)
    expect(cookie).toBeDefined()
    expect(cookie).not.toMatch(/;\s*Secure/i)
    expect(cookie).toMatch(/HttpOnly/i)
    expect(cookie).toMatch(/SameSite=Lax/i)
  })

  it('behind a trusted proxy that says https, the cookie is Secure', async () => {
    const reply = await signIn({ from: '127.0.0.3', headers: { 'host': 'clubroom-laptop.fernhollow.example', 'x-forwarded-proto': 'https' } })
    expect(reply.status).toBe(200)
    expect(sessionCookie(reply)).toMatch(/;\s*Secure/i)
  })

  it('X-Forwarded-Proto from anyone else is ignored', async () => {
    const reply = await signIn({ from: '127.0.0.1', headers: { 'x-forwarded-proto': 'https' } })
    expect(sessionCookie(reply)).not.toMatch(/;\s*Secure/i)
  })
})

describe('sign-in throttling cannot be turned against an account\'s owner', () => {
  async function newAccount() {
    const admin = await signedIn('admin')
    const email = `owner-${unique()}@fernhollow.example`
    expect((await admin.post('/api/users', { email, name: 'Wenna Flint', role: 'viewer', password: 'owners-own-password' })).status).toBe(201)
    return email
  }

  it('five wrong passwords from elsewhere hold that address, not the owner at theirs', async () => {
    const email = await newAccount()
    for (let i = 0; i < 5; i++) expect((await send('POST', '/api/auth/sign-in', { from: '127.0.0.2', body: { email, password: 'guessed-wrong-1' } })).status).toBe(401)
    const attacker = await send('POST', '/api/auth/sign-in', { from: '127.0.0.2', body: { email, password: 'owners-own-password' } })
    expect(attacker.status).toBe(429)
    expect(Number(attacker.headers['retry-after'])).toBeGreaterThan(0)
    const owner = await send('POST', '/api/auth/sign-in', { from: '127.0.0.1', body: { email, password: 'owners-own-password' } })
    expect(owner.status).toBe(200)
  })

  it('behind a trusted proxy, the pair uses the address the proxy saw (last X-Forwarded-For entry)', async () => {
    const email = await newAccount()
    const via = (client: string) => ({ from: '127.0.0.3', headers: { 'x-forwarded-for': `203.0.113.9, ${client}` } })
    for (let i = 0; i < 5; i++) expect((await send('POST', '/api/auth/sign-in', { ...via('192.0.2.50'), body: { email, password: 'guessed-wrong-2' } })).status).toBe(401)
    expect((await send('POST', '/api/auth/sign-in', { ...via('192.0.2.50'), body: { email, password: 'owners-own-password' } })).status).toBe(429)
    expect((await send('POST', '/api/auth/sign-in', { ...via('192.0.2.60'), body: { email, password: 'owners-own-password' } })).status).toBe(200)
  })
})

describe('security headers', () => {
  it('every page carries a nonce-based CSP that forbids framing, and the usual headers; no x-powered-by', async () => {
    const reply = await send('GET', '/sign-in', { headers: { accept: 'text/html' } })
    expect(reply.status).toBe(200)
    const csp = String(reply.headers['content-security-policy'])
    const nonce = /'nonce-([^']+)'/.exec(csp)?.[1]
    expect(nonce).toBeTruthy()
    expect(csp).toMatch(/frame-ancestors 'none'/)
    expect(csp).toMatch(/script-src 'self' 'strict-dynamic' 'nonce-/)
    expect(csp).toMatch(/object-src 'none'/)
    expect(csp).not.toMatch(/upgrade-insecure-requests/)
    expect(reply.headers['x-frame-options']).toBe('DENY')
    expect(reply.headers['x-content-type-options']).toBe('nosniff')
    expect(reply.headers['referrer-policy']).toBe('no-referrer')
    expect(reply.headers['x-powered-by']).toBeUndefined()
    expect(reply.headers['strict-transport-security']).toBeUndefined()
    // Every script of the page carries this response's nonce.
    const scripts = [...reply.body.matchAll(/<script\b[^>]*>/g)].map(m => m[0])
    expect(scripts.length).toBeGreaterThan(0)
    for (const tag of scripts) expect(tag).toContain(`nonce="${nonce}"`)
    // A second load gets another nonce.
    const again = await send('GET', '/sign-in', { headers: { accept: 'text/html' } })
    expect(String(again.headers['content-security-policy'])).not.toContain(nonce)
  })

  it('API answers carry the headers too', async () => {
    const reply = await new SessionClient().get('/api/health')
    expect(reply.headers.get('x-content-type-options')).toBe('nosniff')
    expect(reply.headers.get('x-powered-by')).toBeNull()
  })
})
