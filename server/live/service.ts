import { randomBytes } from 'node:crypto'
import { join } from 'node:path'
import mqtt, { type MqttClient } from 'mqtt'
import { validateLayout } from '#shared/signalling'
import type { ServerMessage } from '#shared/live/protocol'
import type { Database } from '../database/connection'
import { hashPasswordOutsideNitro, verifyPasswordOutsideNitro } from '../database/password-hash'
import { startBroker, type RunningBroker } from './broker'
import { PanelHub } from './hub'
import { createJournal, type Journal } from './journal'
import { parseDetectorPayload, parseDeviceStatusPayload, parseTurnoutPayload } from './payloads'
import { INPUT_FILTERS, parseInputTopic } from '#shared/live/topics'
import { LayoutRuntime } from './runtime'
import { restoreLayoutState } from './restore'

export interface LiveSettings {
  /** External broker; when set, no broker is started here. */
  mqttUrl: string | null
  mqttHost: string
  mqttPort: number
  demo: boolean
  debounceMs: number
  dataDir: string
}

export function liveSettings(env: NodeJS.ProcessEnv = process.env): LiveSettings {
  return {
    mqttUrl: env.MQTT_URL || null,
    mqttHost: env.MQTT_HOST || '127.0.0.1',
    mqttPort: Number(env.MQTT_PORT || 18830),
    demo: env.BLOCKBELL_DEMO === '1',
    debounceMs: Number(env.BLOCKBELL_DETECTOR_DEBOUNCE_MS ?? 300),
    dataDir: env.BLOCKBELL_DATA_DIR || join(process.cwd(), '.data'),
  }
}

const log = (message: string) => console.log(`[blockbell] ${message}`)

/**
 * Everything live in one server process: the embedded broker (unless an external one is configured), the
 * MQTT bridge, one runtime per layout, the panels' WebSocket hub and the journal.
 */
export class LiveService {
  readonly hub = new PanelHub()
  readonly runtimes = new Map<string, LayoutRuntime>()
  readonly counters = { mqttRejected: 0, mqttTimeReplaced: 0 }
  private broker: RunningBroker | null = null
  private client: MqttClient | null = null
  private journal: Journal
  private ready: Promise<void>

  constructor(private readonly db: Database, private readonly settings: LiveSettings) {
    this.journal = createJournal({ sequelize: db.sequelize, spillDir: join(settings.dataDir, 'journal-spill'), log })
    this.ready = this.start()
  }

  whenReady(): Promise<void> { return this.ready }

  runtime(slug: string): LayoutRuntime | undefined { return this.runtimes.get(slug) }

  private async start(): Promise<void> {
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

  /** Loads every layout from the database; retries while PostgreSQL is unreachable. */
  private async loadLayouts(): Promise<void> {
    for (let attempt = 1; ; attempt++) {
      try {
        const rows = await this.db.models.Layout.findAll()
        for (const row of rows) {
          const checked = validateLayout(row.definition)
          if (!checked.ok) { log(`layout ${row.slug} is not valid and is not run: ${checked.errors.map(e => `${e.path}: ${e.message}`).join('; ')}`); continue }
          const restored = await restoreLayoutState(this.db, row.id, checked.layout)
          this.runtimes.set(row.slug, new LayoutRuntime({
            layoutId: row.id, slug: row.slug, layout: checked.layout, debounceMs: this.settings.debounceMs,
            state: restored.state, areas: restored.areas,
            publish: (topic, payload, retain) => this.client?.publish(topic, payload, { retain, qos: 1 }),
            journal: this.journal,
            broadcast: (message: ServerMessage) => this.hub.broadcast(row.slug, message),
          }))
        }
        log(`live layouts: ${[...this.runtimes.keys()].join(', ') || 'none'}`)
        return
      } catch (error) {
        log(`cannot load layouts yet (attempt ${attempt}): ${(error as Error).message}`)
        await new Promise(resolve => setTimeout(resolve, Math.min(5000, 500 * attempt)))
      }
    }
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
      for (const runtime of this.runtimes.values()) runtime.publishAllIndications()
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
        runtime.detectorInput(input.id, parsed.value.occupied, parsed.value.at)
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
    for (const runtime of this.runtimes.values()) runtime.stop()
    await new Promise<void>(resolve => this.client ? this.client.end(false, {}, () => resolve()) : resolve())
    await this.broker?.close()
    await this.journal.close()
  }
}
