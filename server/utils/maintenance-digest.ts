import { QueryTypes, type Sequelize, type Transaction } from 'sequelize'
import type { MailMessage } from '../mail/outbox'
import { maintenanceDigestMail, type DigestSection } from '../mail/templates'
import { maintenanceDue, type LayoutDue } from './maintenance-due'

/** The ISO 8601 week of a moment (UTC): '2026-W49'. Week 1 is the week with the year's first Thursday. */
export function isoWeekKey(at: Date): string {
  const day = new Date(Date.UTC(at.getUTCFullYear(), at.getUTCMonth(), at.getUTCDate()))
  const weekday = day.getUTCDay() || 7
  day.setUTCDate(day.getUTCDate() + 4 - weekday) // the Thursday of this week decides the year
  const yearStart = Date.UTC(day.getUTCFullYear(), 0, 1)
  const week = Math.ceil(((day.getTime() - yearStart) / 86_400_000 + 1) / 7)
  return `${day.getUTCFullYear()}-W${String(week).padStart(2, '0')}`
}

const due = (day: string | null) => day ? `due ${day}` : ''

function sectionLines(l: LayoutDue, tasks: LayoutDue['tasks']): string[] {
  return [
    ...l.blocks.map(b => `Clean track in ${b.block} (${b.name}): ${b.reasons.join('; ')}`),
    ...l.stock.map(s => `Service ${s.name}${s.number ? ` ${s.number}` : ''}: ${s.reasons.join('; ')}`),
    ...tasks.map(t => `${t.title}: ${t.state === 'due' ? 'due' : 'due soon'}, ${due(t.nextDue)}${t.assignee ? ` (${t.assignee.name})` : ''}`),
  ]
}

export interface DigestDeps {
  sequelize: Sequelize
  /** Queues a message inside the transaction that records the week (sent after its commit). */
  queue: (message: MailMessage, transaction: Transaction) => Promise<unknown>
  publicUrl: string
}

/**
 * Sends this week's maintenance digest: admins get everything due on every layout, each task's assignee the
 * tasks given to them. Once per ISO week whatever the number of servers: the week's row in sent_digests is
 * claimed first, and the messages are queued in the same transaction; a server that finds the row taken
 * sends nothing.
 */
export async function sendWeeklyDigest(deps: DigestDeps, now = new Date()): Promise<{ week: string, messages: number, alreadySent: boolean }> {
  const { sequelize } = deps
  const week = isoWeekKey(now)
  const layouts = await maintenanceDue(sequelize, now)
  return sequelize.transaction(async (transaction) => {
    const claimed = await sequelize.query<{ week_key: string }>(
      'INSERT INTO sent_digests (week_key, sent_at) VALUES (:week, :now) ON CONFLICT (week_key) DO NOTHING RETURNING week_key',
      { replacements: { week, now }, transaction, type: QueryTypes.SELECT })
    if (!claimed.length) return { week, messages: 0, alreadySent: true }
    const people = await sequelize.query<{ id: number, email: string, name: string, role: string }>(
      'SELECT id, email, name, role FROM users WHERE disabled_at IS NULL ORDER BY id', { transaction, type: QueryTypes.SELECT })
    let messages = 0
    for (const person of people) {
      const sections: DigestSection[] = layouts.map(l => ({
        layoutName: l.layoutName,
        lines: person.role === 'admin'
          ? sectionLines(l, l.tasks)
          : sectionLines({ ...l, blocks: [], stock: [] }, l.tasks.filter(t => t.assignee?.id === person.id)),
      })).filter(s => s.lines.length)
      if (!sections.length) continue
      const mail = maintenanceDigestMail({ name: person.name, week, sections, link: `${deps.publicUrl}/maintenance`, publicUrl: deps.publicUrl })
      await deps.queue({ kind: 'maintenance-digest', to: person.email, ...mail }, transaction)
      messages++
    }
    await sequelize.query('UPDATE sent_digests SET messages = :messages WHERE week_key = :week', { replacements: { messages, week }, transaction })
    return { week, messages, alreadySent: false }
  })
}
