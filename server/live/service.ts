import { randomBytes } from 'node:crypto'
import { hostname } from 'node:os'
import { join } from 'node:path'
import mqtt, { type MqttClient } from 'mqtt'
import { validateLayout } from '#shared/signalling'
import { HEARTBEAT_MS, type AreaHolders, type LiveCommand, type LiveSession as OperatingSessionInfo, type LiveUser, type ServerMessage } from '#shared/live/protocol'
import type { Layout } from '#shared/schemas/layout'
import type { LayoutState } from '#shared/signalling'
import type { Layout as LayoutRow } from '../database/models'
import type { Database } from '../database/connection'
import { hashPasswordOutsideNitro, verifyPasswordOutsideNitro } from '../database/password-hash'
import { startBroker, type RunningBroker } from './broker'
import type { LiveSession } from '../utils/live-auth'
import type { PanelConnection } from './connection'
import { PanelHub } from './hub'
import { createJournal, type Journal } from './journal'
import { parseDetectorPayload, parseDeviceStatusPayload, parseTurnoutPayload } from './payloads'
import { INPUT_FILTERS, parseInputTopic } from '#shared/live/topics'
import { LayoutRuntime, type CommandOutcome } from './runtime'
import { restoreLayoutState } from './restore'
import { carryAreas, carryState } from './layout-reload'
import { runningLiveSession } from './session-live'
import { ClusterLink, type AccountChange, type ClusterHost, type OwnerRequest, type OwnerWorkAnswer } from './cluster'
import { LayoutOwnership } from './ownership'
import { databaseSettings } from '../database/config'

export interface LiveSettings {
  /** External broker; when set, no broker is started here. */
  mqttUrl: string | null
  mqttHost: string
  mqttPort: number
  demo: boolean
  debounceMs: number
  dataDir: string
  /** BLOCKBELL_AREA_GRACE_S: a holder with no panel open this long leaves the area unattended. */
  areaGraceMs: number
  /** BLOCKBELL_HANDOVER_TIMEOUT_S: a hand-over not accepted in this time stays with the giver. */
  handOverTimeoutMs: number
  /** BLOCKBELL_INSTANCE: this process's name in logs and /api/health. */
  instance: string
  /**
   * Several processes share the broker at MQTT_URL and the database (BLOCKBELL_INSTANCE and MQTT_URL both
   * set): each layout runs in the one process holding its advisory lock; the others relay.
   */
  several: boolean
}

/** A whole number of seconds from the environment, in ms; the default when unset or not a positive number. */
function secondsSetting(value: string | undefined, fallbackS: number, name: string): number {
  if (value === undefined || value === '') return fallbackS * 1000
  const n = Number(value)
  if (Number.isFinite(n) && n > 0 && n <= 86_400) return Math.round(n * 1000)
  console.warn(`[blockbell] ${name}="${value}" is not a number of seconds between 0 and 86400; using ${fallbackS}`)
  return fallbackS * 1000
}

export function liveSettings(env: NodeJS.ProcessEnv = process.env): LiveSettings {
  return {
    mqttUrl: env.MQTT_URL || null,
    mqttHost: env.MQTT_HOST || '127.0.0.1',
    mqttPort: Number(env.MQTT_PORT || 18830),
    demo: env.BLOCKBELL_DEMO === '1',
    debounceMs: Number(env.BLOCKBELL_DETECTOR_DEBOUNCE_MS ?? 300),
    dataDir: env.BLOCKBELL_DATA_DIR || join(process.cwd(), '.data'),
    areaGraceMs: secondsSetting(env.BLOCKBELL_AREA_GRACE_S, 60, 'BLOCKBELL_AREA_GRACE_S'),
    handOverTimeoutMs: secondsSetting(env.BLOCKBELL_HANDOVER_TIMEOUT_S, 30, 'BLOCKBELL_HANDOVER_TIMEOUT_S'),
    instance: instanceName(env.BLOCKBELL_INSTANCE),
    several: Boolean(env.BLOCKBELL_INSTANCE && env.MQTT_URL),
  }
}

/** A name that fits in topic levels and logs; the host name and process id when unset. */
function instanceName(value: string | undefined): string {
  const cleaned = (value ?? '').replace(/[^A-Za-z0-9._-]/g, '-').slice(0, 48)
  return cleaned || `${hostname().replace(/[^A-Za-z0-9._-]/g, '-').slice(0, 32)}-${process.pid}`
}

const log = (message: string) => console.log(`[blockbell] ${message}`)

/**
 * Everything live in one server process: the embedded broker (unless an external one is configured), the
 * MQTT bridge, one runtime per layout, the panels' WebSocket hub and the journal.
 */
export class LiveService implements ClusterHost {
  readonly hub = new PanelHub()
  readonly runtimes = new Map<string, LayoutRuntime>()
  readonly counters = { mqttRejected: 0, mqttTimeReplaced: 0 }
  private broker: RunningBroker | null = null
  private client: MqttClient | null = null
  private journal: Journal
  private ready: Promise<void>
  private heartbeat: ReturnType<typeof setInterval>
  private panels = new Set<PanelConnection>()
  private sessionVersions = new Map<number, number>()
  // Sessions signed out while this process ran (a few a day; a restart forgets them, the database does not).
  private endedSessions = new Set<string>()
  // Several processes (settings.several): the link to the others, the layout locks, every live layout of the
  // database (id -> slug, also those another process runs), the epoch of each layout owned here, and the
  // panels other processes have open on them.
  private cluster: ClusterLink | null = null
  private ownership: LayoutOwnership | null = null
  private layoutSlugs = new Map<number, string>()
  private ownerEpochs = new Map<string, number>()
  private remotePanels = new Map<string, Map<string, { user: LiveUser, count: number }[]>>()
  private ownerWorkers = new Map<string, (input: unknown) => Promise<unknown>>()

  constructor(private readonly db: Database, private readonly settings: LiveSettings) {
    this.journal = createJournal({ sequelize: db.sequelize, spillDir: join(settings.dataDir, 'journal-spill'), log })
    this.ready = this.start()
    // Panels take silence as "no word from the server": a paused or stuck process shows within seconds.
    this.heartbeat = setInterval(() => this.hub.broadcastAll({ type: 'heartbeat', at: Date.now() }), HEARTBEAT_MS)
    this.heartbeat.unref()
  }

  whenReady(): Promise<void> { return this.ready }

  runtime(slug: string): LayoutRuntime | undefined { return this.runtimes.get(slug) }

  addPanel(panel: PanelConnection): void { this.panels.add(panel) }
  removePanel(panel: PanelConnection): void { this.panels.delete(panel) }

  /** Records an account's session version as read from the database (only ever moves forward). */
  noteSessionVersion(userId: number, version: number): void {
    if (version > (this.sessionVersions.get(userId) ?? -1)) this.sessionVersions.set(userId, version)
  }

  /** Whether a panel's session still stands, as far as this process knows (commands also ask the database). */
  sessionCurrent(session: LiveSession): boolean {
    if (this.endedSessions.has(session.id)) return false
    const known = this.sessionVersions.get(session.userId)
    return known === undefined || known === session.version
  }

  /** One session was signed out: its panels close at once, on every process. */
  endOneSession(sessionId: string): void {
    const change = { kind: 'one-session', sessionId } as const
    this.accountChanged(change)
    this.cluster?.announceAccount(change)
  }

  /**
   * An account's sessions have ended (its session version is now `version`): its panels are closed at
   * once and, for a disabled account, the areas it held are released on every layout; on every process.
   */
  endSessionsOf(userId: number, version: number, { releaseAreas }: { releaseAreas: boolean }): void {
    const change = { kind: 'sessions-of', userId, version, releaseAreas } as const
    this.accountChanged(change)
    this.cluster?.announceAccount(change)
  }

  /** Sessions of an account ended (here or on another process): what this process has of them goes. */
  accountChanged(change: AccountChange): void {
    if (change.kind === 'one-session') {
      this.endedSessions.add(change.sessionId)
      for (const panel of [...this.panels]) {
        if (panel.session.id !== change.sessionId) continue
        this.panels.delete(panel)
        panel.end()
      }
      return
    }
    const { userId, version, releaseAreas } = change
    this.noteSessionVersion(userId, version)
    for (const panel of [...this.panels]) {
      if (panel.user.id !== userId || panel.session.version === version) continue
      this.panels.delete(panel)
      panel.end()
    }
    // Several processes: only the layouts this process owns are here (ownedRuntime), the owner of each other does its own.
    if (releaseAreas) for (const runtime of this.runtimes.values()) runtime.releaseAreasOf(userId)
  }

  /** Registers work an HTTP request on any process may need done by a layout's owner (see `ownerWork`). */
  handleOwnerWork<I>(name: string, run: (input: I) => Promise<unknown>): void {
    this.ownerWorkers.set(name, run as (input: unknown) => Promise<unknown>)
  }

  /** Has the owner of `slug` (another process) do registered work; its HTTP error comes back as an answer. */
  async askOwner(slug: string, name: string, input: unknown): Promise<OwnerWorkAnswer> {
    return this.cluster!.ask<OwnerWorkAnswer>(slug, { kind: 'work', name, input } satisfies OwnerRequest)
  }

  private async start(): Promise<void> {
    if (this.settings.several) return this.startSeveral()
    if (process.env.BLOCKBELL_INSTANCE && !this.settings.mqttUrl) log('BLOCKBELL_INSTANCE is set but MQTT_URL is not: running alone with the embedded broker')
    // Entries a previous run left in the spill file go in first, so the restored state includes them.
    await this.journal.flush()
    await this.loadLayouts()
    this.dummyHash = hashPasswordOutsideNitro(randomBytes(18).toString('base64'))
    const internal = { username: 'blockbell-server', password: randomBytes(24).toString('hex') }
    let url = this.settings.mqttUrl
    if (!url) {
      this.broker = await startBroker({
        host: this.settings.mqttHost, port: this.settings.mqttPort, internal, allowAnonymous: this.settings.demo, log,
        checkDevice: (username, password) => this.checkDevice(username, password),
      })
      url = `mqtt://${this.settings.mqttHost}:${this.broker.port}`
    }
    this.connectBridge(url, this.settings.mqttUrl ? {} : internal)
  }

  /**
   * One of several processes: no broker here, no runtime until this process holds a layout's lock. Entries a
   * former run left in the spill file still go in first (those of an epoch since taken over are refused).
   */
  private async startSeveral(): Promise<void> {
    await this.journal.flush()
    const url = this.settings.mqttUrl!
    this.cluster = new ClusterLink(url, this.settings.instance, this)
    this.client = this.cluster.client
    this.client.on('connect', () => {
      log(`MQTT bridge connected to ${url} (instance ${this.settings.instance})`)
      for (const runtime of this.runtimes.values()) runtime.publishAllRetained()
    })
    for (let attempt = 1; ; attempt++) {
      try {
        const rows = await this.db.models.Layout.findAll({ where: { archivedAt: null }, attributes: ['id', 'slug'] })
        for (const row of rows) this.layoutSlugs.set(row.id, row.slug)
        break
      } catch (error) {
        log(`cannot load layouts yet (attempt ${attempt}): ${(error as Error).message}`)
        await new Promise(resolve => setTimeout(resolve, Math.min(5000, 500 * attempt)))
      }
    }
    this.ownership = new LayoutOwnership(databaseSettings(), this.settings.instance, {
      acquired: (id, epoch) => this.takeOver(id, epoch),
      lost: id => this.giveUp(id),
    }, log)
    this.ownership.want(this.layoutSlugs.keys())
    this.ownership.start()
    log(`instance ${this.settings.instance}: live layouts ${[...this.layoutSlugs.values()].join(', ') || 'none'}, run by whichever process holds each one's lock`)
  }

  /** This process took a layout's lock: its state is rebuilt from the journal and it runs here. */
  private async takeOver(id: number, epoch: number): Promise<void> {
    const row = await this.db.models.Layout.findByPk(id)
    if (!row || row.archivedAt) throw new Error('the layout is archived or gone')
    const checked = validateLayout(row.definition)
    if (!checked.ok) throw new Error(`the layout is not valid: ${checked.errors.map(e => `${e.path}: ${e.message}`).join('; ')}`)
    const restored = await restoreLayoutState(this.db, row.id, checked.layout)
    const session = await runningLiveSession(this.db, row.id)
    if (this.ownership?.ownedLayouts().get(id) !== epoch) return // lost again meanwhile
    const started = Date.now()
    this.layoutSlugs.set(id, row.slug)
    this.ownerEpochs.set(row.slug, epoch)
    this.remotePanels.delete(row.slug)
    this.cluster!.noteEpoch(row.slug, epoch)
    const runtime = this.newRuntime(row, checked.layout, restored.state, restored.areas, session, epoch)
    this.runtimes.set(row.slug, runtime)
    for (const panel of this.panels) if (panel.layoutSlug === row.slug) runtime.connect(panel.user)
    this.cluster!.takeInputs(row.slug)
    runtime.publishAllRetained()
    // Every panel, here and on the other processes, starts again from this owner's state.
    runtime.flushDelta()
    this.toPanels(row.slug, runtime.snapshot())
    log(`layout ${row.slug} runs here now (instance ${this.settings.instance}, epoch ${epoch}, ${Date.now() - started} ms after the restore)`)
  }

  /** This process lost a layout's lock: it stops writing at once; another process takes over. */
  private giveUp(id: number): void {
    const slug = this.layoutSlugs.get(id)
    if (!slug || !this.ownerEpochs.has(slug)) return
    this.ownerEpochs.delete(slug) // the runtime's journal, MQTT and panel outputs are shut from here on
    this.cluster?.dropInputs(slug)
    this.remotePanels.delete(slug)
    const runtime = this.runtimes.get(slug)
    this.runtimes.delete(slug)
    runtime?.stop()
    this.hub.broadcast(slug, { type: 'error', message: 'This server no longer runs the layout; another server is taking it over. The panel catches up by itself.' })
    log(`layout ${slug}: stopped here (instance ${this.settings.instance} lost its lock)`)
  }

  /** One message for a layout's panels: those here, and (when this process owns it) those of the others. */
  private toPanels(slug: string, message: ServerMessage): void {
    this.hub.broadcast(slug, message)
    const epoch = this.ownerEpochs.get(slug)
    if (epoch !== undefined) this.cluster?.publishPanels(slug, epoch, message)
  }

  // ---- ClusterHost: what the other processes ask of this one ----

  ownedRuntime(slug: string): LayoutRuntime | undefined {
    return this.ownerEpochs.has(slug) ? this.runtimes.get(slug) : undefined
  }

  relay(slug: string, message: ServerMessage): void { this.hub.broadcast(slug, message) }

  ownerChanged(slug: string): void { this.announcePanels(slug) }

  remoteOperators(slug: string, instance: string, operators: { user: LiveUser, count: number }[]): void {
    const runtime = this.ownedRuntime(slug)
    if (!runtime) return
    let byInstance = this.remotePanels.get(slug)
    if (!byInstance) this.remotePanels.set(slug, byInstance = new Map())
    const before = byInstance.get(instance) ?? []
    const countIn = (list: typeof before, userId: number) => list.find(o => o.user.id === userId)?.count ?? 0
    for (const userId of new Set([...before, ...operators].map(o => o.user.id))) {
      const diff = countIn(operators, userId) - countIn(before, userId)
      const user = (operators.find(o => o.user.id === userId) ?? before.find(o => o.user.id === userId))!.user
      for (let i = 0; i < diff; i++) runtime.connect(user)
      for (let i = 0; i < -diff; i++) runtime.disconnect(user)
    }
    byInstance.set(instance, operators)
  }

  instanceGone(instance: string): void {
    for (const slug of this.ownerEpochs.keys()) this.remoteOperators(slug, instance, [])
  }

  layoutsChanged(change: { action: 'start' | 'reload' | 'stop', id: number, slug: string }): void {
    void this.followLayout(change).catch(error => log(`layout ${change.slug}: ${(error as Error).message}`))
  }

  input(topic: string, payload: Buffer): void { this.onMessage(topic, payload) }

  async ownerWork(slug: string, name: string, input: unknown): Promise<OwnerWorkAnswer> {
    const run = this.ownerWorkers.get(name)
    if (!run || !this.ownedRuntime(slug)) return { ok: false, statusCode: 503, message: `The server asked no longer runs ${slug}; try again in a moment.` }
    try {
      return { ok: true, value: await run(input) }
    } catch (error) {
      const { statusCode, message, data } = error as { statusCode?: unknown, message?: string, data?: unknown }
      if (typeof statusCode === 'number' && statusCode < 500) return { ok: false, statusCode, message: message ?? 'Refused.', data }
      log(`${name} on ${slug} for another process failed: ${(error as Error).message}`)
      return { ok: false, statusCode: 500, message: `The server that runs ${slug} could not do it (its log says why).` }
    }
  }

  /** Whether a layout runs on another process (several processes) and this one can relay it. */
  runsElsewhere(slug: string): boolean {
    return this.cluster !== null && !this.ownerEpochs.has(slug) && [...this.layoutSlugs.values()].includes(slug)
  }

  /** Asks the layout's owner (another process) for a snapshot. */
  remoteSnapshot(slug: string): Promise<ServerMessage> {
    return this.cluster!.ask<ServerMessage>(slug, { kind: 'snapshot' } satisfies OwnerRequest)
  }

  /** Forwards a command to the layout's owner (another process) and brings back its outcome. */
  remoteCommand(slug: string, user: LiveUser, command: LiveCommand, madeAt?: number): Promise<CommandOutcome> {
    return this.cluster!.ask<CommandOutcome>(slug, { kind: 'command', user, command, madeAt })
  }

  /** The panels here on a layout changed: the owner (another process) is told who watches. */
  announcePanels(slug: string): void {
    if (!this.cluster || this.ownerEpochs.has(slug)) return
    const counts = new Map<number, { user: LiveUser, count: number }>()
    for (const panel of this.panels) {
      if (panel.layoutSlug !== slug) continue
      const entry = counts.get(panel.user.id)
      if (entry) entry.count++
      else counts.set(panel.user.id, { user: panel.user, count: 1 })
    }
    this.cluster.tell(slug, { kind: 'operators', instance: this.settings.instance, operators: [...counts.values()] })
  }

  /** Which process this is and the layouts it runs (for /api/health). */
  ownerInfo(): { instance: string, several: boolean, owns: string[] } {
    return { instance: this.settings.instance, several: this.settings.several, owns: this.settings.several ? [...this.ownerEpochs.keys()].sort() : [...this.runtimes.keys()].sort() }
  }

  /** Another process saved, made or archived a layout (or this one did): follow it here. */
  private async followLayout(change: { action: 'start' | 'reload' | 'stop', id: number, slug: string }): Promise<void> {
    if (change.action === 'stop') {
      for (const [id, slug] of this.layoutSlugs) if (slug === change.slug) this.layoutSlugs.delete(id)
      this.ownership?.want(this.layoutSlugs.keys())
      if (this.ownerEpochs.has(change.slug)) this.stopRuntime(change.slug)
      else this.hub.broadcast(change.slug, { type: 'error', message: `layout: "${change.slug}" no longer runs (archived or deleted).` })
      return
    }
    this.layoutSlugs.set(change.id, change.slug)
    this.ownership?.want(this.layoutSlugs.keys())
    if (change.action === 'reload' && this.ownerEpochs.has(change.slug)) await this.reloadOwned(change.id)
    void this.ownership?.tick()
  }

  /** Loads every layout that is not archived; retries while PostgreSQL is unreachable. */
  private async loadLayouts(): Promise<void> {
    for (let attempt = 1; ; attempt++) {
      try {
        const rows = await this.db.models.Layout.findAll({ where: { archivedAt: null } })
        for (const row of rows) await this.startRuntime(row)
        log(`live layouts: ${[...this.runtimes.keys()].join(', ') || 'none'}`)
        return
      } catch (error) {
        log(`cannot load layouts yet (attempt ${attempt}): ${(error as Error).message}`)
        await new Promise(resolve => setTimeout(resolve, Math.min(5000, 500 * attempt)))
      }
    }
  }

  /**
   * `epoch` (several processes): the owner epoch the runtime writes under. Its outputs (journal, MQTT,
   * panels) stop the moment this process no longer owns the layout at that epoch.
   */
  private newRuntime(row: { id: number, slug: string }, layout: Layout, state: LayoutState, areas: AreaHolders, session: OperatingSessionInfo | null, epoch?: number): LayoutRuntime {
    const current = () => epoch === undefined || this.ownerEpochs.get(row.slug) === epoch
    return new LayoutRuntime({
      layoutId: row.id, slug: row.slug, layout, debounceMs: this.settings.debounceMs, state, areas, session,
      areaGraceMs: this.settings.areaGraceMs, handOverTimeoutMs: this.settings.handOverTimeoutMs,
      publish: (topic, payload, retain) => { if (current()) this.client?.publish(topic, payload, { retain, qos: 1 }) },
      journal: epoch === undefined ? this.journal : { append: (entry) => { if (current()) this.journal.append({ ...entry, epoch }) } },
      broadcast: epoch === undefined ? (message: ServerMessage) => this.hub.broadcast(row.slug, message) : (message: ServerMessage) => { if (current()) this.toPanels(row.slug, message) },
      // A new owner numbers its deltas past any former owner's, so no panel takes one for a duplicate.
      seqStart: epoch === undefined ? 0 : epoch * 1e9,
    })
  }

  private async startRuntime(row: LayoutRow): Promise<LayoutRuntime | null> {
    const checked = validateLayout(row.definition)
    if (!checked.ok) { log(`layout ${row.slug} is not valid and is not run: ${checked.errors.map(e => `${e.path}: ${e.message}`).join('; ')}`); return null }
    const restored = await restoreLayoutState(this.db, row.id, checked.layout)
    const session = await runningLiveSession(this.db, row.id)
    const runtime = this.newRuntime(row, checked.layout, restored.state, restored.areas, session)
    this.runtimes.set(row.slug, runtime)
    return runtime
  }

  /** A layout made (or restored from the archive) while the server runs gets its runtime at once. */
  async startLayout(id: number): Promise<void> {
    await this.ready
    if (this.cluster) {
      const found = await this.db.models.Layout.findByPk(id)
      if (!found || found.archivedAt) return
      const change = { action: 'start' as const, id, slug: found.slug }
      this.cluster.announceLayouts(change)
      return this.followLayout(change)
    }
    const row = await this.db.models.Layout.findByPk(id)
    if (!row || row.archivedAt || this.runtimes.has(row.slug)) return
    const runtime = await this.startRuntime(row)
    if (!runtime) return
    runtime.publishAllRetained()
    log(`layout ${row.slug} is live`)
  }

  /**
   * A layout's current version changed: its runtime is replaced by one on the new definition, carrying the
   * state of everything the new version still has, and every panel on it gets a fresh snapshot. Operators
   * connected to the old runtime are carried across after the snapshot, so they follow as the next delta.
   */
  async reloadLayout(id: number): Promise<void> {
    await this.ready
    if (this.cluster) {
      const found = await this.db.models.Layout.findByPk(id)
      if (!found || found.archivedAt) return
      const change = { action: 'reload' as const, id, slug: found.slug }
      this.cluster.announceLayouts(change)
      return this.followLayout(change)
    }
    return this.reloadOwned(id)
  }

  private async reloadOwned(id: number): Promise<void> {
    const row = await this.db.models.Layout.findByPk(id)
    if (!row || row.archivedAt) return
    const epoch = this.ownerEpochs.get(row.slug)
    const old = this.runtimes.get(row.slug)
    if (!old) return this.startLayout(id)
    const checked = validateLayout(row.definition)
    if (!checked.ok) return
    old.stop()
    const runtime = this.newRuntime(row, checked.layout, carryState(old.state(), checked.layout), carryAreas(old.areaHolders(), checked.layout), old.currentSession(), epoch)
    this.runtimes.set(row.slug, runtime)
    this.toPanels(row.slug, runtime.snapshot())
    for (const { user, count } of old.connectedOperators()) for (let i = 0; i < count; i++) runtime.connect(user)
    runtime.publishAllRetained()
    log(`layout ${row.slug} reloaded at version ${row.version}`)
  }

  /** An archived or deleted layout stops running; its panels are told. */
  stopLayout(slug: string): void {
    if (this.cluster) {
      const id = [...this.layoutSlugs].find(([, s]) => s === slug)?.[0] ?? 0
      this.cluster.announceLayouts({ action: 'stop', id, slug })
      void this.followLayout({ action: 'stop', id, slug })
      return
    }
    this.stopRuntime(slug)
  }

  private stopRuntime(slug: string): void {
    const runtime = this.runtimes.get(slug)
    if (!runtime) return
    runtime.stop()
    this.runtimes.delete(slug)
    this.toPanels(slug, { type: 'error', message: `layout: "${slug}" no longer runs (archived or deleted).` })
    this.ownerEpochs.delete(slug)
    log(`layout ${slug} stopped`)
  }

  private dummyHash: Promise<string> | null = null

  /**
   * The device's layout (null: every layout) when its username and password are right. An unknown name
   * checks the password against a hash of a random one, so it takes as long as a known name.
   */
  private async checkDevice(username: string, password: string): Promise<{ layout: string | null } | false> {
    const device = await this.db.models.Device.findOne({ where: { username } })
    this.dummyHash ??= hashPasswordOutsideNitro(randomBytes(18).toString('base64'))
    const right = await verifyPasswordOutsideNitro(device?.passwordHash ?? await this.dummyHash, password)
    if (!device || !right || device.disabledAt) return false
    if (device.layoutId === null) return { layout: null }
    const layout = await this.db.models.Layout.findByPk(device.layoutId)
    return layout ? { layout: layout.slug } : false
  }

  /** Ends the device's MQTT connections at once (after it is disabled or given a new password). */
  disconnectDevice(username: string): void {
    this.broker?.disconnectDevice(username)
  }

  private connectBridge(url: string, credentials: { username?: string, password?: string }): void {
    const client = mqtt.connect(url, { ...credentials, clientId: `blockbell-bridge-${randomBytes(4).toString('hex')}`, reconnectPeriod: 1000, connectTimeout: 5000 })
    this.client = client
    client.on('connect', () => {
      log(`MQTT bridge connected to ${url}`)
      client.subscribe(INPUT_FILTERS, { qos: 1 })
      // A broker that restarted may have lost the retained indications: publish them all again.
      for (const runtime of this.runtimes.values()) runtime.publishAllRetained()
    })
    client.on('error', error => log(`MQTT bridge: ${error.message}`))
    client.on('offline', () => log('MQTT bridge offline; reconnecting'))
    client.on('message', (topic, payload) => this.onMessage(topic, payload))
  }

  /** One MQTT message from a device: validated, then fed to its layout's runtime. Never throws. */
  onMessage(topic: string, payload: Buffer): void {
    try {
      const input = parseInputTopic(topic)
      // An empty payload is how a retained message is cleared: nothing to act on.
      if (!input || payload.length === 0) return
      const runtime = this.runtimes.get(input.layout)
      if (!runtime) return
      const reject = (reason: string) => {
        this.counters.mqttRejected++
        if (this.counters.mqttRejected <= 20 || this.counters.mqttRejected % 1000 === 0) log(`MQTT message on ${topic} dropped: ${reason} (${this.counters.mqttRejected} so far)`)
        runtime.rejectInput(topic.slice(-64), reason)
      }
      if (input.kind === 'detector') {
        const parsed = parseDetectorPayload(payload)
        if (!parsed.ok) return reject(parsed.reason)
        if (parsed.value.timeReplaced) {
          this.counters.mqttTimeReplaced++
          if (this.counters.mqttTimeReplaced <= 20 || this.counters.mqttTimeReplaced % 1000 === 0) log(`MQTT message on ${topic}: ${parsed.value.timeReplaced} (${this.counters.mqttTimeReplaced} so far)`)
        }
        runtime.detectorInput(input.id, parsed.value.occupied, parsed.value.at, parsed.value.address)
      } else if (input.kind === 'turnout') {
        const parsed = parseTurnoutPayload(payload)
        if (!parsed.ok) return reject(parsed.reason)
        runtime.turnoutReport(input.id, parsed.value.position)
      } else {
        const parsed = parseDeviceStatusPayload(payload)
        if (!parsed.ok) return reject(parsed.reason)
        runtime.deviceStatus(input.id, parsed.value.online)
      }
    } catch (error) {
      log(`MQTT message on ${topic} failed: ${(error as Error).message}`)
    }
  }

  journalStats() { return this.journal.stats() }

  journalSetAside(limit: number) { return this.journal.setAsideEntries(limit) }

  async close(): Promise<void> {
    clearInterval(this.heartbeat)
    for (const runtime of this.runtimes.values()) runtime.stop()
    if (this.cluster) {
      // What the runtimes queued is written under their epoch before the locks go.
      await this.journal.flush()
      await this.ownership?.stop()
      await this.cluster.close()
      this.client = null
    }
    await new Promise<void>(resolve => this.client ? this.client.end(false, {}, () => resolve()) : resolve())
    await this.broker?.close()
    await this.journal.close()
  }
}
