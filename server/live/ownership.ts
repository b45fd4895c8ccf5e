import pg from 'pg'
import type { DatabaseSettings } from '../database/config'

/** The first key of every layout's advisory lock (the second is the layout id): 'bbel' read as an int. */
export const OWNER_LOCK_SPACE = 0x6262656c

/** How often the lock connection is checked and free layouts are tried. */
export const OWNERSHIP_TICK_MS = 1000
/** A check that takes longer than this counts as a lost connection: ownership is given up at once. */
export const OWNERSHIP_CHECK_TIMEOUT_MS = 2000

/**
 * TCP keepalive PostgreSQL keeps on the lock connection (set per connection, so no server setting is
 * needed). When the network between the owner and PostgreSQL goes silent, without a reset, PostgreSQL
 * frees the owner's locks once idle + interval x count seconds pass without an answer: about 11 s after the
 * last check, where the operating system's default is over two hours. The owner itself stops within its
 * 2 s check, well before. (Ignored on a Unix-domain socket, where there is no network to drop.)
 */
export const LOCK_KEEPALIVE = { idleS: 5, intervalS: 2, count: 3, userTimeoutMs: 10_000 } as const

/** The connection settings of the lock connection (its own, outside Sequelize's pool). */
export function lockConnectionConfig(db: DatabaseSettings, instance: string): pg.ClientConfig {
  const k = LOCK_KEEPALIVE
  return {
    host: db.host, port: db.port, database: db.database, user: db.username, password: db.password,
    application_name: `blockbell-owner-${instance}`.slice(0, 63), connectionTimeoutMillis: OWNERSHIP_CHECK_TIMEOUT_MS,
    keepAlive: true, keepAliveInitialDelayMillis: 1000,
    options: `-c tcp_keepalives_idle=${k.idleS} -c tcp_keepalives_interval=${k.intervalS} -c tcp_keepalives_count=${k.count} -c tcp_user_timeout=${k.userTimeoutMs}`,
  }
}

export interface OwnershipEvents {
  /** This process now owns the layout, under `epoch` (bumped in `layout_owners`). */
  acquired: (layoutId: number, epoch: number) => Promise<void> | void
  /** This process no longer owns the layout (its lock connection failed): stop writing at once. */
  lost: (layoutId: number, reason: string) => void
}

function timeout<T>(work: Promise<T>, ms: number): Promise<T> {
  let timer: NodeJS.Timeout
  const limit = new Promise<never>((_, fail) => { timer = setTimeout(() => fail(new Error(`no answer within ${ms} ms`)), ms) })
  return Promise.race([work, limit]).finally(() => clearTimeout(timer))
}

/**
 * Which layouts this process owns. Each layout's owner holds a PostgreSQL session advisory lock on a
 * connection of its own (not Sequelize's pool: the lock lives exactly as long as that one connection), so
 * the database itself decides: when the owner dies or its connection goes, PostgreSQL drops the lock and the
 * next process to try gets it. Every tick checks the connection; a failed or slow check gives up everything.
 */
export class LayoutOwnership {
  private client: pg.Client | null = null
  private owned = new Map<number, number>()
  private wanted = new Set<number>()
  private timer: NodeJS.Timeout | null = null
  private ticking = false
  private stopped = false

  constructor(
    private readonly db: DatabaseSettings,
    private readonly instance: string,
    private readonly events: OwnershipEvents,
    private readonly log: (message: string) => void,
  ) {}

  /** Layouts to own when free (every live layout); others are let go. */
  want(layoutIds: Iterable<number>): void {
    this.wanted = new Set(layoutIds)
  }

  /** Owned layouts and their epochs. */
  ownedLayouts(): ReadonlyMap<number, number> { return this.owned }

  start(): void {
    if (this.timer || this.stopped) return
    this.timer = setInterval(() => void this.tick(), OWNERSHIP_TICK_MS)
    this.timer.unref()
    void this.tick()
  }

  /** Tries the free layouts now (and checks the connection). */
  async tick(): Promise<void> {
    if (this.ticking || this.stopped) return
    this.ticking = true
    try {
      const client = await this.connection()
      await timeout(client.query('SELECT 1'), OWNERSHIP_CHECK_TIMEOUT_MS)
      for (const layoutId of this.wanted) {
        if (this.owned.has(layoutId) || this.stopped) continue
        const { rows } = await timeout(client.query<{ ok: boolean }>('SELECT pg_try_advisory_lock($1, $2) AS ok', [OWNER_LOCK_SPACE, layoutId]), OWNERSHIP_CHECK_TIMEOUT_MS)
        if (!rows[0]?.ok) continue
        const bumped = await timeout(client.query<{ epoch: string }>(`
          INSERT INTO layout_owners (layout_id, epoch, instance, taken_at) VALUES ($1, 1, $2, now())
          ON CONFLICT (layout_id) DO UPDATE SET epoch = layout_owners.epoch + 1, instance = $2, taken_at = now()
          RETURNING epoch`, [layoutId, this.instance]), OWNERSHIP_CHECK_TIMEOUT_MS)
        const epoch = Number(bumped.rows[0]!.epoch)
        this.owned.set(layoutId, epoch)
        this.log(`instance ${this.instance} owns layout ${layoutId} (epoch ${epoch})`)
        try {
          await this.events.acquired(layoutId, epoch)
        } catch (error) {
          this.log(`layout ${layoutId}: could not start after taking it over: ${(error as Error).message}; letting it go`)
          this.owned.delete(layoutId)
          this.events.lost(layoutId, 'start failed')
          await client.query('SELECT pg_advisory_unlock($1, $2)', [OWNER_LOCK_SPACE, layoutId]).catch(() => {})
        }
      }
      for (const [layoutId] of this.owned) {
        if (this.wanted.has(layoutId)) continue
        this.owned.delete(layoutId)
        this.events.lost(layoutId, 'no longer live here')
        await client.query('SELECT pg_advisory_unlock($1, $2)', [OWNER_LOCK_SPACE, layoutId]).catch(() => {})
      }
    } catch (error) {
      this.dropConnection(`lock connection failed: ${(error as Error).message}`)
    } finally {
      this.ticking = false
    }
  }

  private async connection(): Promise<pg.Client> {
    if (this.client) return this.client
    const client = new pg.Client(lockConnectionConfig(this.db, this.instance))
    // An error or end of this connection ends every lock it held: give them up before anything else runs.
    client.on('error', error => this.dropConnection(`lock connection failed: ${error.message}`, client))
    client.on('end', () => this.dropConnection('lock connection closed', client))
    this.client = client
    try {
      await client.connect()
    } catch (error) {
      this.client = null
      throw error
    }
    return client
  }

  /** The lock connection is gone or not to be trusted: every layout is given up at once. */
  private dropConnection(reason: string, which: pg.Client | null = this.client): void {
    if (which !== this.client || !which) return
    this.client = null
    which.removeAllListeners('end')
    which.on('error', () => {})
    void which.end().catch(() => {})
    for (const [layoutId] of this.owned) {
      this.owned.delete(layoutId)
      this.log(`instance ${this.instance} gives up layout ${layoutId}: ${reason}`)
      this.events.lost(layoutId, reason)
    }
  }

  async stop(): Promise<void> {
    this.stopped = true
    if (this.timer) clearInterval(this.timer)
    this.timer = null
    const client = this.client
    this.client = null
    for (const [layoutId] of this.owned) this.events.lost(layoutId, 'shutting down')
    this.owned.clear()
    if (client) {
      client.removeAllListeners('end')
      client.on('error', () => {})
      await client.end().catch(() => {})
    }
  }
}
