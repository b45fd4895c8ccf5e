import { z } from 'zod'
import type { Layout } from '#shared/schemas/layout'
import { isRetainedInput, TOPIC_ROOT } from '#shared/live/topics'

/**
 * Scripted mode: a JSON file of timed publishes, sent in file order.
 *
 *   [{ "afterMs": 500, "topic": "detector/D01", "payload": "1", "note": "1F42 enters UM1" }, ...]
 *
 * - `afterMs`: when to publish, in ms after the start of the script (after connecting). Never less than the
 *   event before it. Divided by the speed factor.
 * - `topic`: relative to `blockbell/v1/<layout>/`, e.g. `detector/D01`, `turnout/T4`.
 * - `payload`: a string, or a JSON value (sent as its JSON text).
 * - `retain` (optional, default false; true for `turnout/<id>` and `device/...` topics), `note` (optional,
 *   printed in the log).
 */

const RelativeTopic = z
  .string()
  .min(1)
  .max(200)
  .refine(t => !t.startsWith('/') && !t.endsWith('/') && !t.includes('//'), 'a topic has no empty levels')
  .refine(t => !/[+#\0]/.test(t), 'a topic has no wildcards (+, #)')
  .refine(t => !t.startsWith(`${TOPIC_ROOT}/`), 'write the topic relative to blockbell/v1/<layout>/, e.g. detector/D01')

export const ScriptEvent = z.object({
  afterMs: z.number().nonnegative().max(24 * 3600_000),
  topic: RelativeTopic,
  payload: z.union([z.string(), z.number(), z.boolean(), z.record(z.string(), z.unknown()), z.array(z.unknown()), z.null()]),
  retain: z.boolean().optional(),
  note: z.string().max(200).optional(),
})
export type ScriptEventInput = z.input<typeof ScriptEvent>

export const Script = z
  .array(ScriptEvent)
  .max(100_000)
  .superRefine((events, ctx) => {
    for (let i = 1; i < events.length; i++) {
      if (events[i]!.afterMs < events[i - 1]!.afterMs) {
        ctx.addIssue({ code: 'custom', path: [i, 'afterMs'], message: `afterMs ${events[i]!.afterMs} is before the event above (${events[i - 1]!.afterMs})` })
      }
    }
  })

/** A script event ready to send. */
export interface Scheduled {
  /** Ms after the start at which to send it (speed factor applied). */
  dueMs: number
  topic: string
  payload: string
  retain: boolean
  note: string | null
}

export type ParseResult = { ok: true, events: Scheduled[] } | { ok: false, errors: string[] }

/** Validates a parsed JSON script and turns it into the publishes to make, in order. */
export function parseScript(json: unknown, speedFactor = 1): ParseResult {
  const r = Script.safeParse(json)
  if (!r.success) return { ok: false, errors: r.error.issues.map(i => `${i.path.length ? i.path.join('.') : '(script)'}: ${i.message}`) }
  return {
    ok: true,
    events: r.data.map(e => ({
      dueMs: e.afterMs / speedFactor,
      topic: e.topic,
      payload: typeof e.payload === 'string' ? e.payload : JSON.stringify(e.payload),
      retain: e.retain ?? isRetainedInput(e.topic),
      note: e.note ?? null,
    })),
  }
}

/** Topics of the script naming a detector, turnout or signal the layout does not have. */
export function unknownIds(layout: Layout, events: readonly Scheduled[]): string[] {
  const known: Record<string, Set<string>> = {
    detector: new Set(layout.blocks.flatMap(b => b.detectors)),
    turnout: new Set(layout.turnouts.map(t => t.id)),
    signal: new Set(layout.signals.map(s => s.id)),
  }
  const bad = new Set<string>()
  for (const e of events) {
    const [kind, id] = e.topic.split('/')
    const ids = kind === undefined ? undefined : known[kind]
    if (ids && id !== undefined && !ids.has(id)) bad.add(e.topic)
  }
  return [...bad]
}

/** Hands out the script's events as time passes; no timers of its own. */
export class ScriptPlayer {
  private next = 0

  constructor(private readonly events: readonly Scheduled[]) {}

  /** Events due by `elapsedMs` that have not been handed out yet, in order. */
  due(elapsedMs: number): Scheduled[] {
    const out: Scheduled[] = []
    while (this.next < this.events.length && this.events[this.next]!.dueMs <= elapsedMs) out.push(this.events[this.next++]!)
    return out
  }

  /** When the next event is due, or null when the script is done. */
  nextDueMs(): number | null {
    return this.next < this.events.length ? this.events[this.next]!.dueMs : null
  }

  done(): boolean {
    return this.next >= this.events.length
  }
}
