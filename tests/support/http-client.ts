// A small HTTP client for end-to-end tests that keeps the session cookie between calls, as a browser does.

export const BASE_URL = process.env.BLOCKBELL_TEST_URL ?? 'http://127.0.0.1:3939'

export interface Reply<T = any> { status: number, body: T, headers: Headers }

export class SessionClient {
  private cookies = new Map<string, string>()

  constructor(private readonly base = BASE_URL) {}

  get cookieHeader(): string {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ')
  }

  async request<T = any>(method: string, path: string, body?: unknown, extraHeaders: Record<string, string> = {}): Promise<Reply<T>> {
    const headers: Record<string, string> = { accept: 'application/json', ...extraHeaders }
    if (this.cookies.size) headers.cookie = this.cookieHeader
    let payload: string | undefined
    if (body !== undefined) {
      headers['content-type'] ??= 'application/json'
      payload = typeof body === 'string' ? body : JSON.stringify(body)
    }
    const response = await fetch(this.base + path, { method, headers, body: payload, redirect: 'manual' })
    for (const line of response.headers.getSetCookie()) {
      const [pair] = line.split(';')
      const eq = pair!.indexOf('=')
      const name = pair!.slice(0, eq).trim()
      const value = pair!.slice(eq + 1).trim()
      if (!value || /max-age=0/i.test(line) || /expires=thu, 01 jan 1970/i.test(line)) this.cookies.delete(name)
      else this.cookies.set(name, value)
    }
    const text = await response.text()
    let parsed: unknown = text
    try { parsed = text ? JSON.parse(text) : null } catch { /* an HTML page */ }
    return { status: response.status, body: parsed as T, headers: response.headers }
  }

  get<T = any>(path: string) { return this.request<T>('GET', path) }
  post<T = any>(path: string, body?: unknown) { return this.request<T>('POST', path, body ?? {}) }
  patch<T = any>(path: string, body?: unknown) { return this.request<T>('PATCH', path, body ?? {}) }

  async signIn(email: string, password: string): Promise<Reply> {
    return this.post('/api/auth/sign-in', { email, password })
  }
}

export const DEMO = {
  admin: { email: 'admin@fernhollow.example', password: 'lamp-room-admin' },
  signaller: { email: 'signaller1@fernhollow.example', password: 'up-main-signaller' },
  signaller2: { email: 'signaller2@fernhollow.example', password: 'branch-signaller' },
  viewer: { email: 'viewer@fernhollow.example', password: 'platform-viewer' },
} as const

export async function signedIn(role: keyof typeof DEMO): Promise<SessionClient> {
  const client = new SessionClient()
  const reply = await client.signIn(DEMO[role].email, DEMO[role].password)
  if (reply.status !== 200) throw new Error(`sign-in as ${role} failed: ${reply.status} ${JSON.stringify(reply.body)}`)
  return client
}

/** A unique suffix so tests that create accounts can run again on the same database. */
export const unique = () => `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 6)}`
