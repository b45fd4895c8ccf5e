import { mkdirSync, renameSync, writeFileSync } from 'node:fs'
import { join } from 'node:path'
import type { AddressInfo } from 'node:net'
import { simpleParser, type AddressObject } from 'mailparser'
import { SMTPServer } from 'smtp-server'

/** One message as the fake server keeps it: `<id>.json` (parsed) beside `<id>.eml` (as received). */
export interface KeptMail {
  id: string
  receivedAt: string
  envelope: { from: string, to: string[] }
  from: string
  to: string
  subject: string
  text: string
  html: string
  messageId: string | null
}

export interface Refusal { code: number, message: string }

export interface FakeSmtpOptions {
  port: number
  /** Folder for kept messages. */
  dir: string
  /** Decides per recipient; default: addresses under the reserved `.invalid` domain are refused for now (451). */
  refuse?: (address: string) => Refusal | null
  log?: (line: string) => void
}

export interface FakeSmtp {
  port: number
  /** Recipients refused so far. */
  refusals: () => number
  close: () => Promise<void>
}

// RFC 2606 reserves `.invalid`; refusing it lets anyone try a failing delivery without a real server.
export const refuseInvalidDomain = (address: string): Refusal | null =>
  /\.invalid$/i.test(address) ? { code: 451, message: `4.4.1 ${address}: the fake mail server refuses .invalid addresses; try again later` } : null

const addressText = (value: AddressObject | AddressObject[] | undefined) =>
  (Array.isArray(value) ? value.map(v => v.text).join(', ') : value?.text) ?? ''

/**
 * A local SMTP server for development and tests: 127.0.0.1 only, no authentication, accepts every message
 * (unless `refuse` says otherwise), parses it with mailparser and keeps it in a folder.
 */
export async function startFakeSmtp(options: FakeSmtpOptions): Promise<FakeSmtp> {
  const refuse = options.refuse ?? refuseInvalidDomain
  const log = options.log ?? (() => {})
  mkdirSync(options.dir, { recursive: true })
  let refused = 0
  let count = 0

  const server = new SMTPServer({
    name: 'blockbell-fake-smtp',
    banner: 'Blockbell fake mail server: messages are kept locally, none leaves this machine',
    authOptional: true,
    disabledCommands: ['AUTH', 'STARTTLS'],
    size: 10 * 1024 * 1024,
    logger: false,
    onRcptTo(address, _session, callback) {
      const refusal = refuse(address.address)
      if (!refusal) return callback()
      refused++
      log(`refused ${address.address}: ${refusal.code}`)
      callback(Object.assign(new Error(refusal.message), { responseCode: refusal.code }))
    },
    onData(stream, session, callback) {
      const chunks: Buffer[] = []
      stream.on('data', (chunk: Buffer) => chunks.push(chunk))
      stream.on('end', async () => {
        try {
          const raw = Buffer.concat(chunks)
          const parsed = await simpleParser(raw)
          const id = `${Date.now()}-${process.pid}-${++count}`
          const kept: KeptMail = {
            id,
            receivedAt: new Date().toISOString(),
            envelope: {
              from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
              to: session.envelope.rcptTo.map(r => r.address),
            },
            from: addressText(parsed.from),
            to: addressText(parsed.to),
            subject: parsed.subject ?? '',
            text: parsed.text ?? '',
            html: typeof parsed.html === 'string' ? parsed.html : '',
            messageId: parsed.messageId ?? null,
          }
          writeFileSync(join(options.dir, `${id}.eml`), raw)
          // Written under a temporary name, then renamed: a reader never sees half a file.
          writeFileSync(join(options.dir, `${id}.json.part`), JSON.stringify(kept, null, 2))
          renameSync(join(options.dir, `${id}.json.part`), join(options.dir, `${id}.json`))
          log(`kept ${id} for ${kept.envelope.to.join(', ')}: ${kept.subject}`)
          callback(null, `Kept locally as ${id}`)
        } catch (error) {
          callback(Object.assign(new Error(`4.3.0 could not keep the message: ${(error as Error).message}`), { responseCode: 451 }))
        }
      })
    },
  })

  await new Promise<void>((done, fail) => {
    server.once('error', fail)
    server.listen(options.port, '127.0.0.1', () => { server.off('error', fail); done() })
  })
  server.on('error', error => log(`error: ${error.message}`))
  let closing: Promise<void> | undefined
  return {
    port: (server.server.address() as AddressInfo).port,
    refusals: () => refused,
    close: () => (closing ??= new Promise(done => server.close(() => done()))),
  }
}
