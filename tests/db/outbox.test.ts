// The outbox against a real PostgreSQL of its own and the real fake SMTP server (smtp-server + mailparser),
// sending through nodemailer: delivered, retried, failed, and kept across a restart.
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import nodemailer from 'nodemailer'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Database } from '../../server/database/connection'
import { startFakeSmtp, type FakeSmtp, type FakeSmtpOptions } from '../../server/mail/fake-smtp'
import { createOutbox, type Outbox, type OutboxOptions } from '../../server/mail/outbox'
import { freePort, startThrowawayPostgres, type ThrowawayPostgres } from '../support/postgres'
import { keptMail } from '../support/mail'

let cluster: ThrowawayPostgres
let db: Database
const dirs: string[] = []
const servers: FakeSmtp[] = []
const outboxes: Outbox[] = []

const scratch = () => {
  const dir = mkdtempSync(join(tmpdir(), 'blockbell-mail-'))
  dirs.push(dir)
  return dir
}

async function fakeSmtp(options: Partial<FakeSmtpOptions> = {}): Promise<FakeSmtp & { dir: string }> {
  const dir = options.dir ?? scratch()
  const server = await startFakeSmtp({ port: 0, dir, ...options })
  servers.push(server)
  return { ...server, dir }
}

function outbox(port: number, options: Partial<OutboxOptions> = {}): Outbox {
  const transport = nodemailer.createTransport({ host: '127.0.0.1', port, secure: false, ignoreTLS: true, connectionTimeout: 2_000 })
  const o = createOutbox({
    db, transport, from: 'Blockbell <blockbell@fernhollow.example>', local: true,
    retryBaseMs: 50, maxAttempts: 3, pollMs: 50, log: () => {}, ...options,
  })
  outboxes.push(o)
  return o
}

const message = (to: string) => ({
  kind: 'test', to, subject: 'Track cleaning on Saturday',
  text: 'Bring the cleaning block.\n', html: '<p>Bring the <b>cleaning block</b>.</p>',
})

async function until(check: () => Promise<boolean>, timeoutMs = 10_000) {
  const deadline = Date.now() + timeoutMs
  while (!await check()) {
    if (Date.now() > deadline) throw new Error('condition not met in time')
    await new Promise(r => setTimeout(r, 25))
  }
}

const row = (id: number) => db.models.OutboxMessage.findByPk(id).then(r => r!)

beforeAll(async () => {
  cluster = await startThrowawayPostgres()
  db = await cluster.openMigrated()
})
afterAll(async () => {
  for (const o of outboxes) await o.stop()
  for (const s of servers) await s.close()
  await db?.sequelize.close()
  await cluster?.destroy()
  for (const dir of dirs) rmSync(dir, { recursive: true, force: true })
})

describe('outbox', () => {
  it('delivers a queued message: the fake server parses both parts; the row says "kept"', async () => {
    const smtp = await fakeSmtp()
    const o = outbox(smtp.port)
    const queued = await o.queue(message('orla@fernhollow.example'))
    expect(queued.state).toBe('queued')
    await o.runOnce()
    const stored = await row(queued.id)
    expect(stored.state).toBe('kept')
    expect(stored.attempts).toBe(1)
    expect(stored.sentAt).toBeInstanceOf(Date)
    const [mail] = keptMail(smtp.dir)
    expect(mail).toMatchObject({ subject: 'Track cleaning on Saturday', text: 'Bring the cleaning block.\n', envelope: { to: ['orla@fernhollow.example'] } })
    expect(mail!.html).toContain('<b>cleaning block</b>')
    expect(mail!.from).toContain('blockbell@fernhollow.example')
  })

  it('a real SMTP server (local: false) marks the message "sent"', async () => {
    const smtp = await fakeSmtp()
    const o = outbox(smtp.port, { local: false })
    const queued = await o.queue(message('sefa@fernhollow.example'))
    await o.runOnce()
    expect((await row(queued.id)).state).toBe('sent')
  })

  it('retries a temporary refusal (451) with backoff, then marks it failed with the reason', async () => {
    const smtp = await fakeSmtp({ refuse: () => ({ code: 451, message: '4.3.2 try again later' }) })
    const o = outbox(smtp.port)
    o.start()
    const queued = await o.queue(message('ivo@fernhollow.example'))
    await until(async () => (await row(queued.id)).state === 'failed')
    const stored = await row(queued.id)
    expect(stored.attempts).toBe(3)
    expect(stored.lastError).toMatch(/try again later/)
    expect(smtp.refusals()).toBe(3)
    expect(keptMail(smtp.dir)).toEqual([])
    await o.stop()
  })

  it('does not retry a permanent refusal (550)', async () => {
    const smtp = await fakeSmtp({ refuse: () => ({ code: 550, message: '5.1.1 no such mailbox' }) })
    const o = outbox(smtp.port)
    const queued = await o.queue(message('nobody@fernhollow.example'))
    await o.runOnce()
    const stored = await row(queued.id)
    expect(stored).toMatchObject({ state: 'failed', attempts: 1 })
    expect(stored.lastError).toMatch(/no such mailbox/)
  })

  it('keeps a message through a restart while the mail server is down, and sends it once it is back', async () => {
    const port = await freePort()
    const first = outbox(port)
    const queued = await first.queue(message('wren@fernhollow.example'))
    await first.runOnce()
    const waiting = await row(queued.id)
    expect(waiting).toMatchObject({ state: 'queued', attempts: 1 })
    expect(waiting.lastError).toMatch(/ECONNREFUSED|connect/i)
    await first.stop()
    // A new process: the mail server is up now on that port.
    const smtp = await fakeSmtp({ port })
    const second = outbox(port, { maxAttempts: 6 })
    second.start()
    await until(async () => (await row(queued.id)).state === 'kept')
    expect(keptMail(smtp.dir).map(m => m.envelope.to[0])).toEqual(['wren@fernhollow.example'])
    await second.stop()
  })

  it('two dispatchers on one table deliver each message exactly once', async () => {
    const smtp = await fakeSmtp()
    const a = outbox(smtp.port)
    const b = outbox(smtp.port)
    const ids = []
    for (let i = 0; i < 30; i++) ids.push((await a.queue(message(`member${i}@fernhollow.example`))).id)
    await Promise.all([a.runOnce(), b.runOnce(), a.runOnce(), b.runOnce()])
    const rows = await db.models.OutboxMessage.findAll({ where: { id: ids } })
    expect(rows.every(r => r.state === 'kept' && r.attempts === 1)).toBe(true)
    const to = keptMail(smtp.dir).map(m => m.envelope.to[0]).sort()
    expect(to).toEqual(ids.map((_, i) => `member${i}@fernhollow.example`).sort())
  })

  it('a failed message queued again by retry() goes out', async () => {
    const refusing = await fakeSmtp({ refuse: () => ({ code: 550, message: '5.7.1 refused' }) })
    const o = outbox(refusing.port)
    const queued = await o.queue(message('again@fernhollow.example'))
    await o.runOnce()
    expect((await row(queued.id)).state).toBe('failed')
    await refusing.close()
    const accepting = await fakeSmtp({ port: refusing.port })
    await o.retry(queued.id)
    await o.runOnce()
    expect((await row(queued.id)).state).toBe('kept')
    expect(keptMail(accepting.dir).length).toBe(1)
  })
})
