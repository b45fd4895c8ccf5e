import { z } from 'zod'

/** What a device said, or why it could not be read. */
export type Parsed<T> = { ok: true, value: T } | { ok: false, reason: string }

const MAX_PAYLOAD_BYTES = 1024

/**
 * How far a device's own clock may differ from the server's before its time is not believed: a board that
 * kept events through a short broker outage may send them minutes late; a clock that was never set
 * (`"at": 1`) or a garbled number must not reach the journal or the panel.
 */
export const DEVICE_TIME_PAST_MS = 10 * 60_000
export const DEVICE_TIME_FUTURE_MS = 60_000

/** The device's time when it is within the window around `now`, else `now` and why it was not used. */
export function boundDeviceTime(at: number, now: number): { at: number, replaced?: string } {
  if (at < now - DEVICE_TIME_PAST_MS) return { at: now, replaced: `"at" ${at} is more than ${DEVICE_TIME_PAST_MS / 60_000} minutes before the server's time; the receive time is used` }
  if (at > now + DEVICE_TIME_FUTURE_MS) return { at: now, replaced: `"at" ${at} is more than ${DEVICE_TIME_FUTURE_MS / 1000} s after the server's time; the receive time is used` }
  return { at }
}

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

/**
 * `1` / `0`, or `{"occupied": true, "at"?: epoch ms, "address"?: decoder address 1-10239}`. `at` is kept only
 * when it lies in the window around `now`; otherwise it is left out (the receive time counts) and
 * `timeReplaced` says why.
 */
export function parseDetectorPayload(payload: Buffer, now = Date.now()): Parsed<{ occupied: boolean, at?: number, address?: number, timeReplaced?: string }> {
  const t = text(payload)
  if (!t.ok) return t
  if (t.value === '1') return { ok: true, value: { occupied: true } }
  if (t.value === '0') return { ok: true, value: { occupied: false } }
  const parsed = DetectorJson.safeParse(json(t.value))
  if (parsed.success) {
    const { occupied, at, address } = parsed.data
    const withAddress = address === undefined ? {} : { address }
    if (at === undefined) return { ok: true, value: { occupied, ...withAddress } }
    const time = boundDeviceTime(at, now)
    return { ok: true, value: time.replaced ? { occupied, ...withAddress, timeReplaced: time.replaced } : { occupied, at, ...withAddress } }
  }
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
