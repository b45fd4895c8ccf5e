import { describe, expect, it } from 'vitest'
import escapeHtml from 'escape-html'
import { parseHTML } from './parse-html'
import { html, renderHtml } from '../../../server/mail/html'
import {
  invitationMail, mailDuration, passwordChangedMail, passwordResetMail, sessionSummaryMail,
} from '../../../server/mail/templates'

const publicUrl = 'http://panel.fernhollow.example:3000'
const hostile = '<img src=x onerror="alert(1)"> & <b>Ned</b> "Brackwater"'

describe('html tag', () => {
  it('escapes every interpolated value as the escape-html package does, and keeps nested html as it is', () => {
    const out = renderHtml(html`<p title="${hostile}">${hostile}${html`<br>`}${[1, '<i>']}</p>`)
    // Expected strings built with escape-html itself (npm), the reference for HTML escaping here.
    expect(out).toBe(`<p title="${escapeHtml(hostile)}">${escapeHtml(hostile)}<br>1&lt;i&gt;</p>`)
  })
})

describe('mail templates', () => {
  const expiresAt = new Date('2026-12-05T03:00:00Z')
  const cases = {
    invitation: invitationMail({ inviterName: hostile, role: 'signaller', link: `${publicUrl}/invitation/tok123`, expiresAt, publicUrl }),
    reset: passwordResetMail({ name: hostile, link: `${publicUrl}/reset-password/tok456`, expiresAt, publicUrl }),
    changed: passwordChangedMail({ name: hostile, at: expiresAt, signInUrl: `${publicUrl}/sign-in`, publicUrl }),
    summary: sessionSummaryMail({
      sessionId: 7, sessionName: hostile, layoutName: 'Wrenfold <Junction>', name: 'Orla Fenmoor',
      startedAt: new Date('2026-12-01T19:00:00Z'), endedAt: new Date('2026-12-01T21:05:00Z'),
      trains: 12, signalsPassedAtDanger: 1, dropouts: 4, reviewUrl: `${publicUrl}/sessions/7`, publicUrl,
    }),
  }

  it.each(Object.entries(cases))('%s: both parts, typed text escaped in the HTML and kept as typed in the text', (_kind, mail) => {
    expect(mail.subject.length).toBeGreaterThan(5)
    expect(mail.subject).not.toMatch(/[<>\n]/)
    const doc = parseHTML(mail.html)
    // A browser-grade parser (happy-dom) finds no element that a typed name could have added.
    expect(doc.querySelectorAll('img, script, b, i').length).toBe(0)
    expect(doc.body.textContent).toContain(mail === cases.summary ? 'Wrenfold <Junction>' : hostile)
    expect(mail.text).toContain(mail === cases.summary ? 'Wrenfold <Junction>' : hostile)
    expect(mail.text).not.toMatch(/&lt;|&amp;|<p|<br/)
  })

  it('puts the link into both parts as a full URL', () => {
    const mail = cases.invitation
    expect(mail.text).toContain(`${publicUrl}/invitation/tok123`)
    const links = [...parseHTML(mail.html).querySelectorAll('a')].map(a => a.getAttribute('href'))
    expect(links).toEqual([`${publicUrl}/invitation/tok123`, `${publicUrl}/invitation/tok123`])
  })

  it('says when an invitation link expires (in UTC) and what the role may do', () => {
    expect(cases.invitation.text).toContain('5 Dec 2026, 03:00 UTC')
    expect(cases.invitation.text).toMatch(/as a signaller \(you can operate/)
  })

  it('session summary: duration, trains, signals passed at danger, dropouts and the review link', () => {
    const { text, subject, html: body } = cases.summary
    expect(subject).toBe('Session summary: 12 trains, 1 signal passed at danger')
    expect(text).toContain('Duration: 2 h 05 min (1 Dec 2026, 19:00 UTC to 1 Dec 2026, 21:05 UTC)')
    expect(text).toContain('Trains: 12')
    expect(text).toContain('Signals passed at danger: 1')
    expect(text).toContain('Detector dropouts: 4')
    expect(text).toContain(`Review the session: ${publicUrl}/sessions/7`)
    expect(body).toContain('Signals passed at danger: 1<br>Detector dropouts: 4</p>')
    expect(text).toContain('not a safety system')
  })

  it.each([[0, '0 min'], [59_000, '1 min'], [3_600_000, '1 h 00 min'], [7_500_000, '2 h 05 min']])('duration %d ms -> %s', (ms, words) => {
    expect(mailDuration(ms)).toBe(words)
  })
})
