import WebSocket from 'ws'
import type { LiveChange, ServerMessage } from '#shared/live/protocol'
import { BASE_URL, signedIn, type DEMO } from './http-client'

export const WS_URL = BASE_URL.replace(/^http/, 'ws') + '/live'

/** A panel's WebSocket as a test sees it: every message kept, with a way to wait for the next one that matches. */
export class LiveClient {
  readonly messages: ServerMessage[] = []
  private waiters: { test: (m: ServerMessage) => boolean, resolve: (m: ServerMessage) => void }[] = []
  private nextId = 0

  private constructor(readonly socket: WebSocket) {
    socket.on('message', (data) => {
      const message = JSON.parse(String(data)) as ServerMessage
      this.messages.push(message)
      this.waiters = this.waiters.filter((w) => {
        if (!w.test(message)) return true
        w.resolve(message)
        return false
      })
    })
  }

  static async open(cookie: string, base = BASE_URL): Promise<LiveClient> {
    const socket = new WebSocket(base.replace(/^http/, 'ws') + '/live', { headers: { cookie, origin: base } })
    const client = new LiveClient(socket)
    await new Promise<void>((resolve, reject) => { socket.once('open', () => resolve()); socket.once('error', reject) })
    await client.next(m => m.type === 'welcome')
    return client
  }

  static async as(role: keyof typeof DEMO, slug = 'wrenfold'): Promise<LiveClient> {
    const http = await signedIn(role)
    const client = await LiveClient.open(http.cookieHeader)
    await client.subscribe(slug)
    return client
  }

  /** Resolves with the first message (already received or still to come) that passes `test`. */
  next<T extends ServerMessage = ServerMessage>(test: (m: ServerMessage) => boolean, timeoutMs = 5000, since = 0): Promise<T> {
    const seen = this.messages.slice(since).find(test)
    if (seen) return Promise.resolve(seen as T)
    return new Promise((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`no matching message within ${timeoutMs} ms; last: ${JSON.stringify(this.messages.slice(-3))}`)), timeoutMs)
      this.waiters.push({ test, resolve: (m) => { clearTimeout(timer); resolve(m as T) } })
    })
  }

  /** Waits for a delta that holds a change passing `test`, among messages from now on. */
  change<T extends LiveChange = LiveChange>(test: (c: LiveChange) => boolean, timeoutMs = 5000): Promise<T> {
    const since = this.messages.length
    return this.next(m => m.type === 'delta' && m.changes.some(test), timeoutMs, since)
      .then(m => (m as Extract<ServerMessage, { type: 'delta' }>).changes.find(test) as T)
  }

  send(message: unknown): void { this.socket.send(typeof message === 'string' ? message : JSON.stringify(message)) }

  async subscribe(slug: string) {
    const since = this.messages.length
    this.send({ type: 'subscribe', layout: slug })
    return this.next<Extract<ServerMessage, { type: 'snapshot' }>>(m => m.type === 'snapshot' || m.type === 'error', 5000, since)
  }

  async snapshot() {
    const since = this.messages.length
    this.send({ type: 'resync' })
    return this.next<Extract<ServerMessage, { type: 'snapshot' }>>(m => m.type === 'snapshot', 5000, since)
  }

  async command(command: Record<string, unknown>) {
    const id = `c${++this.nextId}`
    this.send({ type: 'command', id, command })
    return this.next<Extract<ServerMessage, { type: 'command-result' }>>(m => m.type === 'command-result' && m.id === id)
  }

  close(): void { this.socket.close() }
}

/** The HTTP status a refused WebSocket upgrade answered with. */
export function upgradeStatus(headers: Record<string, string>): Promise<number> {
  return new Promise((resolve) => {
    const socket = new WebSocket(WS_URL, { headers })
    socket.on('unexpected-response', (_req, res) => { resolve(res.statusCode ?? 0); socket.terminate() })
    socket.on('open', () => { resolve(101); socket.close() })
    socket.on('error', () => resolve(0))
  })
}
