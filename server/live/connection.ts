import type { Peer } from 'crossws'
import { ClientMessage, MAX_MESSAGE_BYTES, type LiveCommand, type LiveUser, type ServerMessage } from '#shared/live/protocol'
import { describeIssues } from '../utils/validation'
import type { LiveSession } from '../utils/live-auth'
import type { LiveService } from './service'
import type { CommandOutcome } from './runtime'

const RATE_PER_SECOND = 20
const BURST = 40

/** One panel's WebSocket: its user, its layout, and a token bucket against message floods. */
export class PanelConnection {
  private slug: string | null = null
  private tokens = BURST
  private refilledAt = Date.now()

  constructor(
    readonly peer: Peer,
    public user: LiveUser,
    readonly session: LiveSession,
    private readonly live: LiveService,
    private readonly recheckUser: () => Promise<LiveUser | null>,
  ) {}

  /** The layout this panel watches, if any. */
  get layoutSlug(): string | null { return this.slug }

  /** Ends this panel's link because its session has ended (sign-out, password, disable, role change). */
  end(): void {
    this.send({ type: 'error', message: 'Your session has ended. Sign in again.' })
    this.leave()
    this.peer.close(4001, 'session ended')
  }

  send(message: ServerMessage): void { this.peer.send(JSON.stringify(message)) }

  private allow(): boolean {
    const now = Date.now()
    this.tokens = Math.min(BURST, this.tokens + ((now - this.refilledAt) / 1000) * RATE_PER_SECOND)
    this.refilledAt = now
    if (this.tokens < 1) return false
    this.tokens -= 1
    return true
  }

  async receive(raw: string): Promise<void> {
    // Every message is checked against the account's session version known in this process; commands
    // also read the account from the database.
    if (!this.live.sessionCurrent(this.session)) return this.end()
    if (!this.allow()) return this.send({ type: 'error', message: `Too many messages: at most ${RATE_PER_SECOND} a second.` })
    if (Buffer.byteLength(raw) > MAX_MESSAGE_BYTES) return this.send({ type: 'error', message: `Message too large: at most ${MAX_MESSAGE_BYTES} bytes.` })
    let data: unknown
    try { data = JSON.parse(raw) } catch { return this.send({ type: 'error', message: 'Message is not valid JSON.' }) }
    const parsed = ClientMessage.safeParse(data)
    if (!parsed.success) return this.send({ type: 'error', message: describeIssues(parsed.error).message })
    const message = parsed.data
    switch (message.type) {
      case 'ping': return this.send({ type: 'pong' })
      case 'subscribe': return this.subscribe(message.layout)
      case 'resync': {
        const runtime = this.slug ? this.live.runtime(this.slug) : undefined
        if (!runtime && this.slug && this.live.runsElsewhere(this.slug)) return this.sendRemoteSnapshot(this.slug)
        if (!runtime) return this.send({ type: 'error', message: 'Subscribe to a layout first.' })
        return this.send(runtime.snapshot())
      }
      case 'command': {
        const runtime = this.slug ? this.live.runtime(this.slug) : undefined
        const elsewhere = !runtime && this.slug !== null && this.live.runsElsewhere(this.slug)
        if (!runtime && !elsewhere) return this.send({ type: 'command-result', id: message.id, ok: false, reason: 'Subscribe to a layout first.' })
        // The role and the account are checked again for every command: a change by an admin takes effect at once.
        let current: LiveUser | null
        try {
          current = await this.recheckUser()
        } catch {
          return this.send({ type: 'command-result', id: message.id, ok: false, reason: 'The database is not reachable just now, so the command cannot be checked; nothing was changed. Try again in a moment.' })
        }
        if (!current) {
          this.send({ type: 'command-result', id: message.id, ok: false, reason: 'Your session has ended (account disabled or access changed). Sign in again.' })
          return this.end()
        }
        this.user = current
        const verdict = runtime ? runtime.command(current, message.command, message.madeAt) : await this.remoteCommand(current, message.command, message.madeAt)
        return this.send(verdict.ok ? { type: 'command-result', id: message.id, ok: true } : { type: 'command-result', id: message.id, ok: false, reason: verdict.reason })
      }
    }
  }

  /** Several processes: the command goes to the process that runs the layout, and its outcome comes back. */
  private async remoteCommand(user: LiveUser, command: LiveCommand, madeAt?: number): Promise<CommandOutcome> {
    try {
      return await this.live.remoteCommand(this.slug!, user, command, madeAt)
    } catch {
      return { ok: false, reason: 'No answer from the server that runs this layout (it may be changing over to another server). The command may or may not have been carried out: look at the panel before you try again.' }
    }
  }

  private async sendRemoteSnapshot(slug: string): Promise<void> {
    try {
      const snapshot = await this.live.remoteSnapshot(slug)
      if (this.slug === slug) this.send(snapshot)
    } catch {
      if (this.slug === slug) this.send({ type: 'error', message: 'No server runs this layout just now; the panel catches up as soon as one takes it over.' })
    }
  }

  private subscribe(slug: string): void | Promise<void> {
    const runtime = this.live.runtime(slug)
    if (!runtime && this.live.runsElsewhere(slug)) {
      // Join first: deltas that come before the snapshot are dropped by the panel; any after it follow it.
      this.leave()
      this.slug = slug
      this.live.hub.join(slug, this.peer)
      this.live.announcePanels(slug)
      return this.sendRemoteSnapshot(slug)
    }
    if (!runtime) return this.send({ type: 'error', message: `layout: there is no live layout "${slug}".` })
    this.leave()
    this.slug = slug
    // Snapshot first (it sends any queued delta to the others), then join: the next delta follows it.
    const snapshot = runtime.snapshot()
    this.live.hub.join(slug, this.peer)
    this.send(snapshot)
    runtime.connect(this.user)
  }

  leave(): void {
    if (!this.slug) return
    const slug = this.slug
    this.live.hub.leave(slug, this.peer)
    this.slug = null
    const runtime = this.live.runtime(slug)
    if (runtime) runtime.disconnect(this.user)
    else this.live.announcePanels(slug)
  }
}
