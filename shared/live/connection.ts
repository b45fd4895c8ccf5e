import { applyDelta, applySnapshot, type PanelView } from './apply'
import type { ClientMessage, ServerMessage } from './protocol'

/**
 * One panel's link to `/live`: subscribes to a layout, keeps the view in step (snapshot, then deltas in
 * seq order; a gap asks for `resync`), and reconnects by itself with growing delays. After every reconnect
 * the server sends a fresh snapshot, so nothing missed while away is lost.
 *
 * connecting: first attempt; live: a snapshot has arrived on the current socket and the server is heard
 * from; stale: the socket is open but nothing (not even the heartbeat) has come for `staleAfterMs` — the
 * server may be stuck, so the picture may be old; reconnecting: the link dropped and a new attempt is due;
 * offline: several attempts failed (or the device has no network), it keeps trying at the longest delay;
 * idle: stopped.
 */
export type ConnectionState = 'idle' | 'connecting' | 'live' | 'stale' | 'reconnecting' | 'offline'

/**
 * The part of the WebSocket interface used here (the browser's WebSocket and the `ws` package both fit;
 * the handlers' event types differ between the two, hence `never`).
 */
export interface SocketLike {
  readonly readyState: number
  send(data: string): void
  close(code?: number, reason?: string): void
  onopen: ((ev: never) => void) | null
  onmessage: ((ev: never) => void) | null
  onclose: ((ev: never) => void) | null
  onerror: ((ev: never) => void) | null
}

export interface LiveConnectionOptions {
  url: string
  layout: string
  view: PanelView
  createSocket: (url: string) => SocketLike
  /** Messages other than snapshot and delta: welcome, command-result, error, pong. */
  onMessage?: (msg: ServerMessage) => void
  onState?: (state: ConnectionState, attempt: number) => void
  isOnline?: () => boolean
  /** Delays between attempts, in ms; the last one repeats. */
  backoffMs?: number[]
  /** Failed attempts after which the state reads offline. */
  offlineAfter?: number
  pingEveryMs?: number
  /** Nothing heard for this long while live: the state reads stale (the server sends a heartbeat every second). */
  staleAfterMs?: number
  /** Nothing heard for this long: the socket is taken as dead and replaced. */
  silenceLimitMs?: number
  /** A resync that brings no snapshot within this time: reconnect. */
  resyncTimeoutMs?: number
}

const OPEN = 1

export class LiveConnection {
  private readonly o: Required<LiveConnectionOptions>
  private socket: SocketLike | null = null
  private stopped = true
  private attempt = 0
  private resyncing = false
  private retryTimer: ReturnType<typeof setTimeout> | null = null
  private pingTimer: ReturnType<typeof setInterval> | null = null
  private silenceTimer: ReturnType<typeof setTimeout> | null = null
  private staleTimer: ReturnType<typeof setTimeout> | null = null
  /** Server clock minus this device's clock, from the latest heartbeat. */
  private clockOffset = 0
  /** When the server was last heard from (this device's clock). */
  heardAt = 0
  private resyncTimer: ReturnType<typeof setTimeout> | null = null
  state: ConnectionState = 'idle'

  constructor(options: LiveConnectionOptions) {
    this.o = {
      onMessage: () => {}, onState: () => {}, isOnline: () => true,
      backoffMs: [500, 1000, 2000, 4000, 8000, 15_000, 30_000], offlineAfter: 5,
      pingEveryMs: 15_000, staleAfterMs: 3500, silenceLimitMs: 40_000, resyncTimeoutMs: 5_000,
      ...options,
    }
  }

  get layout(): string { return this.o.layout }

  /** Now on the server's clock, as far as the heartbeats tell (commands carry it as `madeAt`). */
  serverNow(now = Date.now()): number { return Math.round(now + this.clockOffset) }

  start(): void {
    if (!this.stopped) return
    this.stopped = false
    this.open()
  }

  stop(): void {
    this.stopped = true
    this.clearTimers()
    this.detach(1000, 'panel closed')
    this.setState('idle')
  }

  /** Sends a message when the socket is open; false when it is not. */
  send(msg: ClientMessage): boolean {
    if (!this.socket || this.socket.readyState !== OPEN) return false
    this.socket.send(JSON.stringify(msg))
    return true
  }

  /** Tries again at once (after the device came back online, or on the user's request). */
  retryNow(): void {
    if (this.stopped || this.socket) return
    if (this.retryTimer) clearTimeout(this.retryTimer)
    this.retryTimer = null
    if (this.state === 'offline') this.setState('reconnecting')
    this.open()
  }

  private setState(state: ConnectionState): void {
    this.state = state
    this.o.onState(state, this.attempt)
  }

  private open(): void {
    this.retryTimer = null
    if (this.state !== 'offline') this.setState(this.attempt === 0 && this.state !== 'reconnecting' ? 'connecting' : 'reconnecting')
    let socket: SocketLike
    try {
      socket = this.o.createSocket(this.o.url)
    } catch {
      this.dropped()
      return
    }
    this.socket = socket
    this.heard()
    socket.onopen = () => {
      if (this.socket !== socket) return
      this.resyncing = false
      this.send({ type: 'subscribe', layout: this.o.layout })
      this.heard()
      this.pingTimer = setInterval(() => this.send({ type: 'ping' }), this.o.pingEveryMs)
    }
    socket.onmessage = (ev: { data: unknown }) => {
      if (this.socket === socket) this.receive(ev.data)
    }
    socket.onclose = () => {
      if (this.socket === socket) this.dropped()
    }
    socket.onerror = () => {}
  }

  private receive(raw: unknown): void {
    this.heard()
    let msg: ServerMessage
    try {
      msg = JSON.parse(typeof raw === 'string' ? raw : String(raw)) as ServerMessage
    } catch {
      return
    }
    if (!msg || typeof msg !== 'object' || typeof msg.type !== 'string') return
    if (this.state === 'stale') this.setState('live')
    if (msg.type === 'heartbeat') {
      if (typeof msg.at === 'number') this.clockOffset = msg.at - Date.now()
    } else if (msg.type === 'snapshot') {
      if (msg.layout !== this.o.layout) return
      applySnapshot(this.o.view, msg)
      this.resyncing = false
      if (this.resyncTimer) clearTimeout(this.resyncTimer)
      this.attempt = 0
      this.setState('live')
    } else if (msg.type === 'delta') {
      if (applyDelta(this.o.view, msg) === 'gap' && !this.resyncing) this.resync()
    } else {
      this.o.onMessage(msg)
    }
  }

  private resync(): void {
    this.resyncing = true
    this.send({ type: 'resync' })
    this.resyncTimer = setTimeout(() => this.replace(), this.o.resyncTimeoutMs)
  }

  /** Any message proves the link is alive. */
  private heard(): void {
    this.heardAt = Date.now()
    if (this.silenceTimer) clearTimeout(this.silenceTimer)
    if (this.staleTimer) clearTimeout(this.staleTimer)
    this.silenceTimer = setTimeout(() => this.replace(), this.o.silenceLimitMs)
    this.staleTimer = setTimeout(() => { if (this.state === 'live') this.setState('stale') }, this.o.staleAfterMs)
  }

  /** Drops the current socket (dead or stuck) and reconnects as after a loss. */
  private replace(): void {
    this.detach(4000, 'no answer')
    this.dropped()
  }

  private dropped(): void {
    this.socket = null
    this.clearTimers()
    if (this.stopped) return
    this.attempt += 1
    const offline = this.attempt > this.o.offlineAfter || !this.o.isOnline()
    this.setState(offline ? 'offline' : 'reconnecting')
    const delays = this.o.backoffMs
    const base = delays[Math.min(this.attempt - 1, delays.length - 1)]!
    const jitter = base * 0.2 * (Math.random() - 0.5)
    this.retryTimer = setTimeout(() => this.open(), Math.round(base + jitter))
  }

  private detach(code: number, reason: string): void {
    const s = this.socket
    this.socket = null
    if (!s) return
    s.onopen = s.onmessage = s.onclose = s.onerror = null
    try {
      s.close(code, reason)
    } catch { /* already closed */ }
  }

  private clearTimers(): void {
    for (const t of [this.retryTimer, this.silenceTimer, this.staleTimer, this.resyncTimer]) if (t) clearTimeout(t)
    if (this.pingTimer) clearInterval(this.pingTimer)
    this.retryTimer = this.silenceTimer = this.staleTimer = this.resyncTimer = this.pingTimer = null
  }
}
