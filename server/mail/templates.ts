import { html, renderHtml } from './html'
import type { Role } from '#shared/utils/roles'

/** A rendered message: both parts carry the same words. */
export interface RenderedMail { subject: string, text: string, html: string }

const ROLE_WORDS: Record<Role, string> = {
  viewer: 'a viewer (you can watch the panel and review sessions)',
  signaller: 'a signaller (you can operate the signals and turnouts of the areas you take)',
  admin: 'an admin (you can manage people, layouts and maintenance)',
}

const UTC_TIME = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium', timeStyle: 'short', timeZone: 'UTC' })

export function mailTime(at: Date): string {
  return `${UTC_TIME.format(at)} UTC`
}

export function mailDuration(ms: number): string {
  const minutes = Math.max(0, Math.round(ms / 60_000))
  const hours = Math.floor(minutes / 60)
  const rest = minutes % 60
  return hours ? `${hours} h ${String(rest).padStart(2, '0')} min` : `${rest} min`
}

/** A paragraph is a sentence, or a list of lines (one per line in both parts). */
type Paragraph = string | string[]

interface Frame { heading: string, paragraphs: Paragraph[], action?: { label: string, url: string }, after?: string[], footer: string }

// Table layout and inline styles: what mail programs render alike.
function frameHtml({ heading, paragraphs, action, after = [], footer }: Frame): string {
  const p = (content: Paragraph) => html`<p style="margin:0 0 14px;font-size:16px;line-height:1.5;color:#1a2623">${
    Array.isArray(content) ? content.map((line, i) => html`${i ? html`<br>` : ''}${line}`) : content
  }</p>`
  return renderHtml(html`<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>${heading}</title></head>
<body style="margin:0;padding:0;background:#eef3f1;font-family:Barlow,Segoe UI,Helvetica,Arial,sans-serif">
<table role="presentation" width="100%" cellspacing="0" cellpadding="0" style="background:#eef3f1;padding:24px 0"><tr><td align="center">
<table role="presentation" width="560" cellspacing="0" cellpadding="0" style="max-width:560px;width:100%;background:#ffffff;border:1px solid #d5dfdb;border-radius:10px">
<tr><td style="background:#121b19;border-radius:10px 10px 0 0;padding:14px 24px;font-size:20px;font-weight:700;letter-spacing:1px;color:#e6b655">Blockbell</td></tr>
<tr><td style="padding:24px">
<h1 style="margin:0 0 16px;font-size:22px;color:#121b19">${heading}</h1>
${paragraphs.map(p)}
${action
  ? html`<p style="margin:20px 0"><a href="${action.url}" style="display:inline-block;background:#d49b2f;color:#0b1110;font-weight:700;text-decoration:none;padding:12px 20px;border-radius:8px">${action.label}</a></p>
<p style="margin:0 0 14px;font-size:13px;color:#4a5d56">If the button does not work, copy this address into your browser:<br><a href="${action.url}" style="color:#8a5f18;word-break:break-all">${action.url}</a></p>`
  : ''}
${after.map(p)}
</td></tr>
<tr><td style="padding:14px 24px;border-top:1px solid #d5dfdb;font-size:12px;color:#627870">${footer}</td></tr>
</table></td></tr></table>
</body></html>`)
}

function frameText({ heading, paragraphs, action, after = [], footer }: Frame): string {
  return [
    heading, '',
    ...paragraphs.flatMap(content => [...(Array.isArray(content) ? content : [content]), '']),
    ...(action ? [`${action.label}: ${action.url}`, ''] : []),
    ...after.flatMap(line => [line, '']),
    '-- ', footer, '',
  ].join('\n')
}

function render(subject: string, frame: Frame): RenderedMail {
  return { subject, text: frameText(frame), html: frameHtml(frame) }
}

const footerFor = (publicUrl: string) => `Sent by Blockbell at ${publicUrl}.`

export function invitationMail(input: { inviterName: string, role: Role, link: string, expiresAt: Date, publicUrl: string }): RenderedMail {
  return render('Your invitation to Blockbell', {
    heading: 'You are invited to Blockbell',
    paragraphs: [
      `${input.inviterName} has invited you to the club's Blockbell panel as ${ROLE_WORDS[input.role]}.`,
      'Open the link to choose the name others will see and your password; you are then signed in.',
    ],
    action: { label: 'Accept the invitation', url: input.link },
    after: [`The link works once and expires on ${mailTime(input.expiresAt)}. If you did not expect this, ignore it.`],
    footer: footerFor(input.publicUrl),
  })
}

export function passwordResetMail(input: { name: string, link: string, expiresAt: Date, publicUrl: string }): RenderedMail {
  return render('Reset your Blockbell password', {
    heading: 'Choose a new password',
    paragraphs: [
      `Hello ${input.name},`,
      'someone asked to reset the password of your Blockbell account. If it was you, open the link and choose a new password.',
    ],
    action: { label: 'Choose a new password', url: input.link },
    after: [
      `The link works once and expires on ${mailTime(input.expiresAt)}.`,
      'If it was not you, ignore this message: your password stays as it is.',
    ],
    footer: footerFor(input.publicUrl),
  })
}

export function passwordChangedMail(input: { name: string, at: Date, signInUrl: string, publicUrl: string }): RenderedMail {
  return render('Your Blockbell password was changed', {
    heading: 'Your password was changed',
    paragraphs: [
      `Hello ${input.name},`,
      `the password of your Blockbell account was changed on ${mailTime(input.at)} with a reset link sent to this address.`,
      'If that was not you, ask your layout\'s admin to disable the account at once, then reset the password again.',
    ],
    action: { label: 'Sign in', url: input.signInUrl },
    footer: footerFor(input.publicUrl),
  })
}

/** What an operator is told when an operating session ends. */
export interface SessionSummary {
  sessionId: number
  sessionName: string
  layoutName: string
  startedAt: Date
  endedAt: Date
  trains: number
  signalsPassedAtDanger: number
  dropouts: number
}

export function sessionSummaryMail(input: SessionSummary & { name: string, reviewUrl: string, publicUrl: string }): RenderedMail {
  const count = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`
  const facts = [
    `Duration: ${mailDuration(input.endedAt.getTime() - input.startedAt.getTime())} (${mailTime(input.startedAt)} to ${mailTime(input.endedAt)})`,
    `Trains: ${input.trains}`,
    `Signals passed at danger: ${input.signalsPassedAtDanger}`,
    `Detector dropouts: ${input.dropouts}`,
  ]
  return render(`Session summary: ${count(input.trains, 'train', 'trains')}, ${count(input.signalsPassedAtDanger, 'signal passed at danger', 'signals passed at danger')}`, {
    heading: 'Operating session ended',
    paragraphs: [
      `Hello ${input.name},`,
      `the session "${input.sessionName}" on ${input.layoutName} has ended. You operated in it.`,
      facts,
    ],
    action: { label: 'Review the session', url: input.reviewUrl },
    after: [
      'Many dropouts in one block often mean dirty track or wheels there: the Maintenance screen shows what is due.',
      'Blockbell is for models; it is not a safety system.',
    ],
    footer: footerFor(input.publicUrl),
  })
}

/** One layout's part of the weekly maintenance digest: a line per thing due. */
export interface DigestSection { layoutName: string, lines: string[] }

export function maintenanceDigestMail(input: { name: string, week: string, sections: DigestSection[], link: string, publicUrl: string }): RenderedMail {
  const total = input.sections.reduce((n, s) => n + s.lines.length, 0)
  return render(`Maintenance due this week (${input.week}): ${total} ${total === 1 ? 'item' : 'items'}`, {
    heading: 'Maintenance due this week',
    paragraphs: [
      `Hello ${input.name},`,
      'this is what is due or nearly due on the layouts you look after:',
      ...input.sections.flatMap(s => [s.layoutName, s.lines.map(line => `- ${line}`)] as (string | string[])[]),
    ],
    action: { label: 'Open the Maintenance screen', url: input.link },
    after: [
      'Before cleaning track: isolate the track power. Cleaning fluids such as isopropyl alcohol are flammable: use little of it, in a ventilated room, away from heat and sparks, and follow the product\'s safety sheet.',
    ],
    footer: footerFor(input.publicUrl),
  })
}
