// Reads what the local fake mail server kept (one JSON file per message, parsed with mailparser).
import { existsSync, readdirSync, readFileSync } from 'node:fs'
import { join } from 'node:path'
import type { KeptMail } from '../../server/mail/fake-smtp'

export const MAIL_DIR = process.env.BLOCKBELL_TEST_MAIL_DIR ?? ''

export function keptMail(dir = MAIL_DIR): KeptMail[] {
  if (!dir || !existsSync(dir)) return []
  return readdirSync(dir).filter(f => f.endsWith('.json')).sort()
    .map(f => JSON.parse(readFileSync(join(dir, f), 'utf8')) as KeptMail)
}

export function mailTo(address: string, dir = MAIL_DIR): KeptMail[] {
  return keptMail(dir).filter(m => m.envelope.to.includes(address.toLowerCase()))
}

/** Waits for the `count`-th message to `address` (default the first) and returns it. */
export async function waitForMail(address: string, { count = 1, subject, dir = MAIL_DIR, timeoutMs = 15_000 }: { count?: number, subject?: RegExp, dir?: string, timeoutMs?: number } = {}): Promise<KeptMail> {
  const deadline = Date.now() + timeoutMs
  for (;;) {
    const found = mailTo(address, dir).filter(m => !subject || subject.test(m.subject))
    if (found.length >= count) return found[count - 1]!
    if (Date.now() > deadline) throw new Error(`no mail #${count} to ${address}${subject ? ` matching ${subject}` : ''} within ${timeoutMs} ms (kept: ${keptMail(dir).length})`)
    await new Promise(r => setTimeout(r, 100))
  }
}

/** The one-time link in a message's plain-text part. */
export function linkIn(text: string, path: '/invitation/' | '/reset-password/'): string {
  const match = text.match(new RegExp(`https?://\\S+${path}[A-Za-z0-9_-]+`))
  if (!match) throw new Error(`no ${path} link in:\n${text}`)
  return match[0]
}
