import { randomBytes } from 'node:crypto'
import mqtt, { type IPublishPacket, type MqttClient } from 'mqtt'
import type { LiveCommand, LiveUser, ServerMessage } from '#shared/live/protocol'
import { layoutInputFilters, parseServerTopic, SERVER_FILTERS, serverTopics } from '#shared/live/topics'
import type { CommandOutcome, LayoutRuntime } from './runtime'

/** Requests a process sends a layout's owner. */
export type OwnerRequest
  = | { kind: 'snapshot' }
    | { kind: 'command', user: LiveUser, command: LiveCommand, madeAt?: number }
    | { kind: 'operators', instance: string, operators: { user: LiveUser, count: number }[] }
    | { kind: 'work', name: string, input: unknown }

/** The owner's answer to `work`: its result, or the HTTP error it would have answered itself. */
export type OwnerWorkAnswer
  = | { ok: true, value: unknown }
    | { ok: false, statusCode: number, message: string, data?: unknown }

/** What every process does when an account's sessions end, wherever the request landed. */
export type AccountChange
  = | { kind: 'one-session', sessionId: string }
    | { kind: 'sessions-of', userId: number, version: number, releaseAreas: boolean }

/** What the cluster link needs from the live service of its process. */
export interface ClusterHost {
  /** The runtime of a layout this process owns. */
  ownedRuntime(slug: string): LayoutRuntime | undefined
  /** A message of the owner for the layout's panels on this process. */
  relay(slug: string, message: ServerMessage): void
  /** A new owner took the layout over (a new epoch): tell it who watches here. */
  ownerChanged(slug: string): void
  /** Another process's panels on a layout this process owns. */
  remoteOperators(slug: string, instance: string, operators: { user: LiveUser, count: number }[]): void
  /** A process went away (its last will): its panels are gone. */
  instanceGone(instance: string): void
  /** A layout was saved, made or archived on another process. */
  layoutsChanged(change: { action: 'start' | 'reload' | 'stop', id: number, slug: string }): void
  /** Work an HTTP request on another process asked of this layout's owner (starting a session, ...). */
  ownerWork(slug: string, name: string, input: unknown): Promise<OwnerWorkAnswer>
  /** Another process ended sessions of an account: close its panels here, release its areas if asked. */
  accountChanged(change: AccountChange): void
  /** A device message on an input topic of a layout this process owns. */
  input(topic: string, payload: Buffer): void
}

export const OWNER_ANSWER_MS = 3000

const log = (message: string) => console.log(`[blockbell] ${message}`)

/**
 * The link between server processes over the shared broker (MQTT 5): the owner of a layout publishes its
 * panel messages with their epoch; other processes relay them to their panels and forward their panels'
 * requests (snapshot, command, who watches) with a response topic and correlation data. Each owned layout
 * also has an input client with a persistent session named after the layout, so device messages sent while
 * no process owns it wait in the broker for the next owner (and a former owner still connected is put off).
 */
export class ClusterLink {
  readonly client: MqttClient
  private pending = new Map<string, { resolve: (value: unknown) => void, reject: (error: Error) => void, timer: NodeJS.Timeout }>()
  private epochs = new Map<string, number>()
  private inputs = new Map<string, MqttClient>()
  private readonly responseTopic: string

  constructor(private readonly url: string, readonly instance: string, private readonly host: ClusterHost) {
    this.responseTopic = serverTopics.responses(instance)
    const status = serverTopics.status(instance)
    this.client = mqtt.connect(url, {
      protocolVersion: 5, clientId: `blockbell-server-${instance}-${randomBytes(3).toString('hex')}`, reconnectPeriod: 1000, connectTimeout: 5000,
      will: { topic: status, payload: Buffer.from('offline'), qos: 1, retain: true },
    })
    this.client.on('connect', () => {
      log(`cluster link of ${instance} connected to ${url}`)
      this.client.subscribe([...SERVER_FILTERS, this.responseTopic], { qos: 1, nl: true })
      this.client.publish(status, 'online', { qos: 1, retain: true })
    })
    this.client.on('error', error => log(`cluster link: ${error.message}`))
    this.client.on('message', (topic, payload, packet) => this.onMessage(topic, payload, packet))
  }

  /** The owner's panel message goes to the other processes' panels. */
  publishPanels(slug: string, epoch: number, message: ServerMessage): void {
    this.client.publish(serverTopics.panels(slug), JSON.stringify({ epoch, instance: this.instance, message }), { qos: 1 })
  }

  announceLayouts(change: { action: 'start' | 'reload' | 'stop', id: number, slug: string }): void {
    this.client.publish(serverTopics.layouts, JSON.stringify({ ...change, instance: this.instance }), { qos: 1 })
  }

  /** Tells every other process that sessions of an account ended. */
  announceAccount(change: AccountChange): void {
    this.client.publish(serverTopics.accounts, JSON.stringify({ ...change, instance: this.instance }), { qos: 1 })
  }

  /** Asks the layout's owner; rejects after OWNER_ANSWER_MS without an answer. */
  ask<T>(slug: string, request: OwnerRequest): Promise<T> {
    const id = randomBytes(8).toString('hex')
    return new Promise<T>((resolve, reject) => {
      const timer = setTimeout(() => {
        this.pending.delete(id)
        reject(new Error(`no answer from the server that runs "${slug}" within ${OWNER_ANSWER_MS / 1000} s`))
      }, OWNER_ANSWER_MS)
      this.pending.set(id, { resolve: resolve as (value: unknown) => void, reject, timer })
      this.client.publish(serverTopics.requests(slug), JSON.stringify(request), {
        qos: 1, properties: { responseTopic: this.responseTopic, correlationData: Buffer.from(id) },
      })
    })
  }

  /** Tells (fire and forget) the owner who watches the layout here. */
  tell(slug: string, request: OwnerRequest): void {
    this.client.publish(serverTopics.requests(slug), JSON.stringify(request), { qos: 1 })
  }

  /** Starts taking a layout's device inputs (this process owns it now). */
  takeInputs(slug: string): void {
    this.dropInputs(slug)
    const client = mqtt.connect(this.url, {
      protocolVersion: 5, clientId: `blockbell-owner-${slug}`.slice(0, 64), clean: false, reconnectPeriod: 1000, connectTimeout: 5000,
      properties: { sessionExpiryInterval: 600 },
    })
    this.inputs.set(slug, client)
    client.on('connect', () => { client.subscribe(layoutInputFilters(slug), { qos: 1 }) })
    // 0x8E: another connection took this session over, i.e. another process owns the layout now.
    client.on('disconnect', (packet) => { if (packet.reasonCode === 0x8E && this.inputs.get(slug) === client) this.dropInputs(slug) })
    client.on('error', error => log(`inputs of ${slug}: ${error.message}`))
    client.on('message', (topic, payload) => { if (this.inputs.get(slug) === client) this.host.input(topic, payload) })
  }

  dropInputs(slug: string): void {
    const client = this.inputs.get(slug)
    if (!client) return
    this.inputs.delete(slug)
    client.end(true)
  }

  private onMessage(topic: string, payload: Buffer, packet: IPublishPacket): void {
    try {
      if (topic === this.responseTopic) return this.onResponse(payload, packet)
      const where = parseServerTopic(topic)
      if (!where) return
      const body = payload.length ? JSON.parse(String(payload)) : null
      if (where.kind === 'panels') return this.onPanels(where.slug, body)
      if (where.kind === 'requests') return this.onRequest(where.slug, body, packet)
      if (where.kind === 'layouts' && body?.instance !== this.instance) return this.host.layoutsChanged(body)
      if (where.kind === 'accounts' && body?.instance !== this.instance) return this.host.accountChanged(body)
      if (where.kind === 'status' && where.instance !== this.instance && String(payload) === 'offline') return this.host.instanceGone(where.instance)
    } catch (error) {
      log(`cluster message on ${topic} failed: ${(error as Error).message}`)
    }
  }

  private onPanels(slug: string, body: { epoch: number, instance: string, message: ServerMessage }): void {
    if (body.instance === this.instance || this.host.ownedRuntime(slug)) return
    const known = this.epochs.get(slug) ?? 0
    // A former owner that has not noticed yet: never relay it.
    if (body.epoch < known) return
    if (body.epoch > known) {
      this.epochs.set(slug, body.epoch)
      this.host.ownerChanged(slug)
    }
    this.host.relay(slug, body.message)
  }

  /** The highest owner epoch seen for a layout (0: none yet). */
  epochOf(slug: string): number { return this.epochs.get(slug) ?? 0 }
  noteEpoch(slug: string, epoch: number): void { this.epochs.set(slug, Math.max(epoch, this.epochOf(slug))) }

  private onRequest(slug: string, request: OwnerRequest, packet: IPublishPacket): void {
    const runtime = this.host.ownedRuntime(slug)
    if (!runtime) return
    let answer: unknown = null
    if (request.kind === 'snapshot') answer = runtime.snapshot()
    else if (request.kind === 'command') answer = runtime.command(request.user, request.command, request.madeAt) satisfies CommandOutcome
    else if (request.kind === 'operators') return this.host.remoteOperators(slug, request.instance, request.operators)
    else if (request.kind === 'work') {
      void this.host.ownerWork(slug, request.name, request.input).then(done => this.answer(packet, done))
      return
    }
    this.answer(packet, answer)
  }

  private answer(packet: IPublishPacket, answer: unknown): void {
    const responseTopic = packet.properties?.responseTopic
    if (!responseTopic) return
    this.client.publish(responseTopic, JSON.stringify(answer), { qos: 1, properties: { correlationData: packet.properties?.correlationData } })
  }

  private onResponse(payload: Buffer, packet: IPublishPacket): void {
    const id = packet.properties?.correlationData?.toString()
    const waiting = id ? this.pending.get(id) : undefined
    if (!waiting || !id) return
    this.pending.delete(id)
    clearTimeout(waiting.timer)
    waiting.resolve(JSON.parse(String(payload)))
  }

  async close(): Promise<void> {
    for (const slug of [...this.inputs.keys()]) this.dropInputs(slug)
    for (const [, waiting] of this.pending) { clearTimeout(waiting.timer); waiting.reject(new Error('closing')) }
    this.pending.clear()
    await new Promise<void>(resolve => this.client.publish(serverTopics.status(this.instance), 'offline', { qos: 1, retain: true }, () => resolve()))
    await new Promise<void>(resolve => this.client.end(false, {}, () => resolve()))
  }
}
