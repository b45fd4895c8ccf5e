// The weekly maintenance digest: what is due on a seeded layout, mailed through the real outbox and the local
// fake SMTP server (smtp-server + mailparser), once per ISO week however many servers try.
// ISO 8601 weeks: week 1 holds the year's first Thursday (checked against dates worked out by hand below).
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import nodemailer from 'nodemailer'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import demo from '#shared/layouts/demo-layout.json' with { type: 'json' }
import type { Database } from '../../server/database/connection'
import { startFakeSmtp, type FakeSmtp } from '../../server/mail/fake-smtp'
import { createOutbox, type Outbox } from '../../server/mail/outbox'
import { insertJournalRecords } from '../../server/live/journal-insert'
import { isoWeekKey, sendWeeklyDigest } from '../../server/utils/maintenance-digest'
import { setCleaningThresholds } from '../../server/utils/maintenance'
import { createMaintenanceTask } from '../../server/utils/maintenance-tasks'
import { createStockItem, setStockDescription } from '../../server/utils/stock'
import { startThrowawayPostgres, type ThrowawayPostgres } from '../support/postgres'
import { keptMail } from '../support/mail'

let cluster: ThrowawayPostgres
let db: Database
let smtp: FakeSmtp
let outbox: Outbox
const mailDir = mkdtempSync(join(tmpdir(), 'blockbell-digest-'))
const MONDAY = new Date(Date.UTC(2026, 11, 7, 8, 0, 0)) // Monday 7 December 2026, ISO week 2026-W50
const deps = () => ({ sequelize: db.sequelize, queue: outbox.queue.bind(outbox), publicUrl: 'http://wrenfold.example' })

async function until(check: () => boolean, timeoutMs = 10_000) {
  const deadline = Date.now() + timeoutMs
  while (!check()) {
    if (Date.now() > deadline) throw new Error('condition not met in time')
    await new Promise(r => setTimeout(r, 25))
  }
}

beforeAll(async () => {
  cluster = await startThrowawayPostgres()
  db = await cluster.openMigrated()
  smtp = await startFakeSmtp({ port: 0, dir: mailDir })
  const transport = nodemailer.createTransport({ host: '127.0.0.1', port: smtp.port, secure: false, ignoreTLS: true })
  outbox = createOutbox({ db, transport, from: 'Blockbell <blockbell@fernhollow.example>', local: true, retryBaseMs: 50, maxAttempts: 3, pollMs: 50, log: () => {} })
  outbox.start()

  const { User, Layout } = db.models
  await User.create({ email: 'ada@fernhollow.example', name: 'Ada Wrenfield', role: 'admin', passwordHash: 'x' })
  const tam = await User.create({ email: 'tam@fernhollow.example', name: 'Tam Oakridge', role: 'signaller', passwordHash: 'x' })
  await User.create({ email: 'milo@fernhollow.example', name: 'Milo Brackenby', role: 'viewer', passwordHash: 'x' })
  await User.create({ email: 'old@fernhollow.example', name: 'Former Admin', role: 'admin', passwordHash: 'x', disabledAt: new Date() } as never)
  const layout = await Layout.create({ slug: 'wrenfold', name: 'Wrenfold Junction', definition: demo as never })
  const T0 = MONDAY.getTime() - 3 * 86_400_000
  // a train described 2H07 passes UM1 (2,200 mm): one passage, and 2,200 mm x 76.2 = 167.64 scale metres
  const loco = await createStockItem(db.sequelize, layout.id, { name: 'Class 20 Bo-Bo', number: '20 042', serviceHours: null, serviceKm: 0.1 })
  await setStockDescription(db.sequelize, loco, '2H07', new Date(T0))
  await insertJournalRecords(db.sequelize, [
    { type: 'block', subject: 'UM1', at: T0 + 1000, payloadJson: '{"type":"block","occupied":true}' },
    { type: 'description', subject: 'UM1', at: T0 + 1000, payloadJson: '{"type":"description","description":"2H07","reason":"interpose"}' },
    { type: 'block', subject: 'UM1', at: T0 + 9000, payloadJson: '{"type":"block","occupied":false}' },
    { type: 'description', subject: 'UM1', at: T0 + 9000, payloadJson: '{"type":"description","description":null,"reason":"clear"}' },
  ].map((e, i) => ({ ...e, seq: i, key: `digest-${i}`, layoutId: layout.id, sessionId: null, userId: null, epoch: null })))
  // UM1 is due at one passage; no days threshold, so the never-cleaned blocks are not "due soon"
  await setCleaningThresholds(db.sequelize, layout.id, { passages: 1, occupiedHours: null, dropouts: null, days: null })
  await createMaintenanceTask(db.sequelize, layout.id, { title: 'Replace the platform lamp bulb', assigneeId: tam.id, dueOn: '2026-12-05' })
  await createMaintenanceTask(db.sequelize, layout.id, { title: 'Dust the station buildings', dueOn: '2026-12-10' })
  await createMaintenanceTask(db.sequelize, layout.id, { title: 'Check the wiring joint under Quillbury', dueOn: '2027-03-01' })
})
afterAll(async () => {
  await outbox?.stop()
  await smtp?.close()
  await db?.sequelize.close()
  await cluster?.destroy()
  rmSync(mailDir, { recursive: true, force: true })
})

describe('ISO week keys', () => {
  it('follow ISO 8601: the week with the year\'s first Thursday is week 1', () => {
    expect(isoWeekKey(MONDAY)).toBe('2026-W50')
    expect(isoWeekKey(new Date(Date.UTC(2026, 0, 1)))).toBe('2026-W01') // Thursday 1 January 2026
    expect(isoWeekKey(new Date(Date.UTC(2027, 0, 1)))).toBe('2026-W53') // Friday 1 January 2027 belongs to 2026's last week
    expect(isoWeekKey(new Date(Date.UTC(2027, 0, 4)))).toBe('2027-W01') // Monday 4 January 2027
    expect(isoWeekKey(new Date(Date.UTC(2024, 11, 30)))).toBe('2025-W01') // Monday 30 December 2024
  })
})

describe('weekly maintenance digest', () => {
  it('mails admins everything due and each assignee their own tasks, through the fake SMTP server', async () => {
    const result = await sendWeeklyDigest(deps(), MONDAY)
    expect(result).toEqual({ week: '2026-W50', messages: 2, alreadySent: false })
    await until(() => keptMail(mailDir).length >= 2)
    const mail = keptMail(mailDir)
    expect(mail.map(m => m.envelope.to[0]).sort()).toEqual(['ada@fernhollow.example', 'tam@fernhollow.example'])
    const ada = mail.find(m => m.envelope.to.includes('ada@fernhollow.example'))!
    expect(ada.subject).toBe('Maintenance due this week (2026-W50): 4 items')
    expect(ada.text).toContain('Wrenfold Junction')
    expect(ada.text).toContain('- Clean track in UM1 (Up approach): 1 passages of 1')
    expect(ada.text).toContain('- Service Class 20 Bo-Bo 20 042: 0.2 scale km of 0.1')
    expect(ada.text).toContain('- Replace the platform lamp bulb: due, due 2026-12-05 (Tam Oakridge)')
    expect(ada.text).toContain('- Dust the station buildings: due soon, due 2026-12-10')
    expect(ada.text).not.toContain('wiring joint') // due in March: not this week's business
    expect(ada.text).toContain('http://wrenfold.example/maintenance')
    expect(ada.text).toMatch(/isolate the track power/)
    const tam = mail.find(m => m.envelope.to.includes('tam@fernhollow.example'))!
    expect(tam.subject).toBe('Maintenance due this week (2026-W50): 1 item')
    expect(tam.text).toContain('- Replace the platform lamp bulb: due, due 2026-12-05')
    expect(tam.text).not.toContain('UM1')
    expect(tam.html).toContain('Replace the platform lamp bulb')
  })

  it('sends nothing on a second run in the same week, and once when two servers run at once', async () => {
    const before = keptMail(mailDir).length
    expect(await sendWeeklyDigest(deps(), new Date(MONDAY.getTime() + 3 * 3600_000))).toMatchObject({ week: '2026-W50', messages: 0, alreadySent: true })
    const nextWeek = new Date(MONDAY.getTime() + 7 * 86_400_000)
    const both = await Promise.all([sendWeeklyDigest(deps(), nextWeek), sendWeeklyDigest(deps(), nextWeek)])
    expect(both.map(r => r.alreadySent).sort()).toEqual([false, true])
    await until(() => keptMail(mailDir).length >= before + 2)
    await new Promise(r => setTimeout(r, 500)) // give any extra message time to arrive
    expect(keptMail(mailDir).length).toBe(before + 2)
    const [row] = await db.sequelize.query<{ n: string }>('SELECT count(*) AS n FROM outbox WHERE kind = \'maintenance-digest\'', { type: 'SELECT' as never })
    expect(Number(row!.n)).toBe(4)
  })
})
