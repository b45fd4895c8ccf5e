import mqtt from 'mqtt'
import type { Aspect } from '#shared/signalling'
import type { Layout } from '#shared/schemas/layout'
import { loadLayout, loadPlans, loadScript } from './load'
import { parseAreaHeld, parseIndication, parseOverride, parseTurnoutRequest, relativeTopic } from './messages'
import { parseOptions, USAGE, type FakeOptions } from './options'
import type { StepResult } from './output'
import { ScriptPlayer } from './script'
import { Simulation } from './simulation'
import { readTurnoutMemory, turnoutMemoryWriter } from './turnout-memory'
import { areaOf, HARDWARE_FILTERS, layoutPrefix, layoutTopic, relative, signalOf, turnoutSetOf } from '#shared/live/topics'

/**
 * The fake layout process: connects to the MQTT broker as the device `fake-layout` and runs either the train
 * simulation or a script. All the train logic is in simulation.ts; this file only moves messages and time.
 */

const DEVICE = 'fake-layout'
const TICK_MS = 20
const MAX_STEP_MS = 500

interface Outgoing {
  topic: string
  payload: string
  retain: boolean
}

interface Mode {
  begin(): void
  /** After a reconnection: report the current state again. */
  resend(): void
  onMessage(topic: string, payload: string): void
  stop(): void
}

type Send = (p: Outgoing) => void
type Log = (text: string) => void

function simulated(o: FakeOptions, layout: Layout, send: Send, log: Log): Mode {
  const seed = o.seed ?? Date.now() % 2 ** 32
  const { plans, source } = loadPlans(layout, o.trains, o.slug, o.trainCount, seed)
  log(`seed ${seed} (repeat this run with --seed ${seed}); trains: ${source}`)
  if (plans.length === 0) log('no trains: the layout has no round trip a train could run')
  if (o.ignoreSignals) log('ignoring signals: trains only keep clear of each other')
  const memory = o.turnoutMemory ? readTurnoutMemory(o.turnoutMemory, layout) : null
  if (memory) log(memory.note)
  const sim = new Simulation(layout, plans, {
    seed, spadChance: o.spadChance, dropoutChance: o.dropoutChance, speedFactor: o.speedFactor, ignoreSignals: o.ignoreSignals,
    // no memory, or nothing in it yet: a layout seen for the first time
    turnouts: memory?.positions ?? undefined,
  })
  const remember = memory && o.turnoutMemory ? turnoutMemoryWriter(o.turnoutMemory, memory.positions ?? {}) : null
  const aspects: Record<string, Aspect> = {}
  const badSignals = new Set<string>()
  const emit = (r: StepResult) => {
    for (const l of r.log) log(l.text)
    for (const p of r.publishes) {
      send(p)
      const thrown = /^turnout\/([^/]+)$/.exec(p.topic)
      if (remember && thrown && (p.payload === 'normal' || p.payload === 'reverse')) remember(thrown[1]!, p.payload)
    }
  }
  let timer: NodeJS.Timeout | undefined
  return {
    begin() {
      emit(sim.start())
      let last = performance.now()
      timer = setInterval(() => {
        const now = performance.now()
        const dt = Math.min(now - last, MAX_STEP_MS)
        last = now
        emit(sim.step(dt, aspects))
      }, TICK_MS)
    },
    resend() {
      for (const p of sim.snapshot()) send(p)
    },
    onMessage(topic, payload) {
      const area = areaOf(topic)
      if (area) {
        const held = parseAreaHeld(payload)
        if (held !== null) emit(sim.setAreaHeld(area, held))
        return
      }
      const id = signalOf(topic)
      if (id) {
        if (payload === '') {
          delete aspects[id]
          sim.setOverride(id, null)
        } else {
          const aspect = parseIndication(payload)
          sim.setOverride(id, parseOverride(payload))
          if (aspect) aspects[id] = aspect
          else if (!badSignals.has(id)) {
            badSignals.add(id)
            log(`ignoring an indication on ${topic} that is not {"aspect": ...}: ${payload.slice(0, 80)}`)
          }
        }
        return
      }
      const set = /^turnout\/([^/]+)\/set$/.exec(topic)
      if (set) {
        const req = parseTurnoutRequest(payload)
        if (req) emit(sim.requestTurnout(set[1]!, req.position, req.by ?? undefined))
        else log(`ignoring a request on ${topic} that is not {"position": "normal"|"reverse"}: ${payload.slice(0, 80)}`)
      }
    },
    stop() {
      clearInterval(timer)
    },
  }
}

function scripted(o: FakeOptions, layout: Layout, send: Send, log: Log, shutdown: (code: number) => void): Mode {
  const { events, unknown } = loadScript(layout, o.script!, o.speedFactor)
  log(`script ${o.script}: ${events.length} events over ${((events.at(-1)?.dueMs ?? 0) / 1000).toFixed(1)} s`)
  for (const t of unknown) log(`warning: ${t} names an id the layout does not have`)
  const player = new ScriptPlayer(events)
  const turnouts = new Set(layout.turnouts.map(t => t.id))
  let timer: NodeJS.Timeout | undefined
  let t0 = 0
  const pump = () => {
    const elapsed = performance.now() - t0
    for (const e of player.due(elapsed)) {
      send(e)
      log(`${e.topic} ${e.payload}${e.retain ? ' (retained)' : ''}${e.note ? `  ${e.note}` : ''}`)
    }
    const next = player.nextDueMs()
    if (next === null) {
      log('script done')
      shutdown(0)
    } else timer = setTimeout(pump, Math.max(0, next - (performance.now() - t0)))
  }
  return {
    begin() {
      t0 = performance.now()
      pump()
    },
    resend() {},
    onMessage(topic, payload) {
      const id = turnoutSetOf(topic)
      if (!id) return
      const req = parseTurnoutRequest(payload)
      if (!req || !turnouts.has(id)) {
        log(`ignoring request on ${topic}: ${payload.slice(0, 80)}`)
        return
      }
      send({ topic: relative.turnout(id), payload: req.position, retain: true })
      log(`${id} thrown ${req.position} on request${req.by ? ` by ${req.by}` : ''}`)
    },
    stop() {
      clearTimeout(timer)
    },
  }
}

function main(): void {
  const parsed = parseOptions(process.argv.slice(2), process.env)
  if (!parsed.ok) {
    if (parsed.help) {
      console.log(USAGE)
      process.exit(0)
    }
    for (const e of parsed.errors) console.error(`fake layout: ${e}`)
    console.error('Try --help.')
    process.exit(2)
  }
  const o = parsed.options
  const t0 = performance.now()
  const log: Log = text => console.log(`[fake-layout ${((performance.now() - t0) / 1000).toFixed(2).padStart(8)} s] ${text}`)
  const prefix = layoutPrefix(o.slug)
  const statusTopic = layoutTopic(o.slug, relative.deviceStatus(DEVICE))

  const client = mqtt.connect(o.mqttUrl, {
    clientId: `${DEVICE}-${o.slug}-${process.pid}`,
    username: o.username,
    password: o.password,
    reconnectPeriod: 2000,
    connectTimeout: 10_000,
    will: { topic: statusTopic, payload: Buffer.from('offline'), qos: 1, retain: true },
  })
  const send: Send = (p) => {
    client.publish(prefix + p.topic, p.payload, { qos: 1, retain: p.retain })
  }
  let stopping = false
  const shutdown = (code: number) => {
    if (stopping) return
    stopping = true
    mode?.stop()
    if (!client.connected) {
      client.end(true, {}, () => process.exit(code))
      return
    }
    client.publish(statusTopic, 'offline', { qos: 1, retain: true }, () => {
      client.end(false, {}, () => process.exit(code))
    })
    setTimeout(() => process.exit(code), 3000).unref()
  }

  let mode: Mode | undefined
  try {
    const layout = loadLayout(o.layout)
    log(`layout "${layout.name}" (${o.layout}): ${layout.blocks.length} blocks, ${layout.turnouts.length} turnouts, ${layout.signals.length} signals; topics ${prefix}#`)
    mode = o.script ? scripted(o, layout, send, log, shutdown) : simulated(o, layout, send, log)
  } catch (e) {
    console.error(`fake layout: ${(e as Error).message}`)
    process.exit(2)
  }

  let connected = false
  client.on('connect', () => {
    client.publish(statusTopic, 'online', { qos: 1, retain: true })
    client.subscribe(HARDWARE_FILTERS(o.slug), { qos: 1 })
    if (!connected) {
      connected = true
      log(`connected to ${o.mqttUrl} as ${o.username}; ${DEVICE} online`)
      mode!.begin()
    } else {
      log('reconnected; reporting turnouts and detectors again')
      mode!.resend()
    }
  })
  client.on('message', (topic, payload) => {
    const rel = relativeTopic(prefix, topic)
    if (rel !== null) mode!.onMessage(rel, payload.toString('utf8'))
  })
  client.on('error', (e: Error & { code?: number | string }) => {
    if (e.code === 4 || e.code === 5 || e.code === 134 || e.code === 135) {
      console.error(`fake layout: the broker refused user ${o.username} (${e.message}); check BLOCKBELL_FAKE_MQTT_USERNAME / BLOCKBELL_FAKE_MQTT_PASSWORD`)
      process.exit(1)
    }
    log(`MQTT: ${e.message}`)
  })
  client.on('offline', () => {
    if (!stopping) log(`no connection to ${o.mqttUrl}; retrying every 2 s`)
  })
  if (o.stopAfterMs !== null) setTimeout(() => shutdown(0), o.stopAfterMs)
  process.on('SIGINT', () => shutdown(0))
  process.on('SIGTERM', () => shutdown(0))
}

main()
