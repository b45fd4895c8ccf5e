import { z } from 'zod'

/** What a device said, or why it could not be read. */
export type Parsed<T> = { ok: true, value: T } | { ok: false, reason: string }

const MAX_PAYLOAD_BYTES = 1024

// `address`: the decoder address a RailCom-capable detector (NMRA S-9.3.2) read in the block
const DetectorJson = z.object({ occupied: z.boolean(), at: z.number().int().positive().optional(), address: z.number().int().min(1).max(10239).optional() }).strict()
const TurnoutJson = z.object({ position: z.enum(['normal', 'reverse']) }).strict()

function text(payload: Buffer): Parsed<string> {
  if (payload.length === 0) return { ok: false, reason: 'empty payload' }
  if (payload.length > MAX_PAYLOAD_BYTES) return { ok: false, reason: `payload over ${MAX_PAYLOAD_BYTES} bytes` }
  const value = payload.toString('utf8').trim()
  if (value.includes('\uFFFD')) return { ok: false, reason: 'payload is not UTF-8 text' }
  return { ok: true, value }
}

function json(value: string): unknown {
  try { return JSON.parse(value) } catch { return undefined }
}

/** `1` / `0`, or `{"occupied": true, "at"?: epoch ms, "address"?: decoder address 1-10239}`. */
export function parseDetectorPayload(payload: Buffer): Parsed<{ occupied: boolean, at?: number, address?: number }> {
  const t = text(payload)
  if (!t.ok) return t
  if (t.value === '1') return { ok: true, value: { occupied: true } }
  if (t.value === '0') return { ok: true, value: { occupied: false } }
  const parsed = DetectorJson.safeParse(json(t.value))
  if (parsed.success) return { ok: true, value: parsed.data }
  return { ok: false, reason: 'detector payload is 1, 0 or {"occupied": true|false, "at"?: epoch ms, "address"?: decoder address 1-10239}' }
}

/** `normal` / `reverse`, or `{"position": "normal" | "reverse"}`. */
export function parseTurnoutPayload(payload: Buffer): Parsed<{ position: 'normal' | 'reverse' }> {
  const t = text(payload)
  if (!t.ok) return t
  if (t.value === 'normal' || t.value === 'reverse') return { ok: true, value: { position: t.value } }
  const parsed = TurnoutJson.safeParse(json(t.value))
  if (parsed.success) return { ok: true, value: parsed.data }
  return { ok: false, reason: 'turnout payload is normal, reverse or {"position": "normal"|"reverse"}' }
}

/** `online` / `offline`. */
export function parseDeviceStatusPayload(payload: Buffer): Parsed<{ online: boolean }> {
  const t = text(payload)
  if (!t.ok) return t
  if (t.value === 'online' || t.value === 'offline') return { ok: true, value: { online: t.value === 'online' } }
  return { ok: false, reason: 'device status payload is online or offline' }
}
