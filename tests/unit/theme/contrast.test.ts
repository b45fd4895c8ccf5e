// Every colour pair the themes put together, checked against WCAG 2.2 contrast minimums:
//   SC 1.4.3 Contrast (Minimum): text 4.5:1 (https://www.w3.org/TR/WCAG22/#contrast-minimum)
//   SC 1.4.11 Non-text Contrast: lamps, track, marks and control edges 3:1 against what is next to them
//   (https://www.w3.org/TR/WCAG22/#non-text-contrast)
// The ratio is ours (shared/theme/contrast.ts, the WCAG relative-luminance formula); each one is checked
// against the npm package wcag-contrast 3.0.0 as an outside reference.
import { describe, expect, it } from 'vitest'
import { hex as referenceContrast } from 'wcag-contrast'
import { palette, themes, type ThemeColours } from '../../../tailwind.config'
import { AREA_COLOUR_NAMES } from '#shared/schemas/layout'
import { blend, contrastRatio, relativeLuminance } from '#shared/theme/contrast'

type Criterion = 'SC 1.4.3' | 'SC 1.4.11'
interface Pair { what: string, fg: string, bg: string, sc: Criterion }
const MINIMUM: Record<Criterion, number> = { 'SC 1.4.3': 4.5, 'SC 1.4.11': 3 }

/** The pairs drawn in one theme: what is written or drawn (fg) on what (bg). */
function pairs(t: ThemeColours): Pair[] {
  const grounds = { 'bg': t.bg, 'surface': t.surface, 'surface-2': t['surface-2'] }
  const out: Pair[] = []
  const text = (what: string, fg: string, bg: string) => out.push({ what, fg, bg, sc: 'SC 1.4.3' })
  const mark = (what: string, fg: string, bg: string) => out.push({ what, fg, bg, sc: 'SC 1.4.11' })
  for (const [name, g] of Object.entries(grounds)) {
    text(`text on ${name}`, t.text, g)
    text(`dim text on ${name}`, t.dim, g)
    text(`danger text (errors, refusals) on ${name}`, t.danger, g)
    text(`accent text (brand, links) on ${name}`, t.accent, g)
    text(`ok text on ${name}`, t.ok, g)
    text(`warn text on ${name}`, t.warn, g)
    mark(`field and button edge on ${name}`, t['border-strong'], g)
    mark(`focus ring on ${name}`, t.accent, g)
  }
  text('primary button label', t['on-accent'], t['accent-fill'])
  text('primary button label, hovered', t['on-accent'], palette.brass[400])
  text('alarm button label', t['on-alarm'], palette.alarm[600])
  text('alarm button label, hovered', t['on-alarm'], palette.alarm[700])
  text('"not live" badge', t['on-warn'], t.warn)
  // tinted grounds: the note classes (14 %) and the alarm banner (16 %) mix a status colour into the surface
  for (const [name, tint, share] of [['ok note', t.ok, 0.14], ['warn note', t.warn, 0.14], ['alarm note', t.danger, 0.14], ['alarm banner', t.alarm, 0.16]] as const) {
    const g = blend(tint, t.surface, share)
    text(`text on the ${name}`, t.text, g)
    text(`dim text on the ${name}`, t.dim, g)
    mark(`${name} edge`, tint, t.surface)
  }
  // the drawing, on the diagram's ground
  mark('free track', t['track-free'], t.bg)
  mark('occupied track', t['track-occupied'], t.bg)
  mark('occupied berth edge', t['track-occupied'], t.surface)
  mark('berth edge', t['border-strong'], t.bg)
  for (const lamp of ['danger', 'caution', 'proceed'] as const) {
    mark(`${lamp} lamp`, t[lamp], t.bg)
    mark(`aspect shape on the ${lamp} lamp`, t.glyph, t[lamp])
  }
  mark('held ring', t.danger, t.bg)
  mark('detector drop-out mark, unknown turnout ring', t.warn, t.bg)
  mark('"!" on the shows-more-than-the-line flag', t.glyph, t.warn)
  mark('alarm halo colour', t.alarm, t.bg)
  mark('turnout tag edge', t['border-strong'], t.surface)
  // areas of control: each colour an owner can pick draws a band under the area's track (components/panel/
  // PanelAreaBands.vue): edges in the full colour on the diagram's ground, a faint inside (area-N-wash) the
  // track and its marks are drawn on; the same colour draws the legend's line and the editor's swatch on a card.
  // (Drawn as a wash alone, at 22 % over the ground as it was, no area colour reached 3:1 against the ground in
  // either theme (1.3 to 1.6:1), and a wash strong enough for 3:1 takes the free track under 3:1 on it.)
  AREA_COLOUR_NAMES.forEach((name, i) => {
    const colour = t[`area-${i}` as 'area-0']
    const inside = t[`area-${i}-wash` as 'area-0-wash']
    mark(`${name} band edge on the diagram's ground`, colour, t.bg)
    mark(`${name} band edge beside the band's inside`, colour, inside)
    mark(`free track on the ${name} band`, t['track-free'], inside)
    mark(`occupied track on the ${name} band`, t['track-occupied'], inside)
    mark(`detector drop-out mark on the ${name} band`, t.warn, inside)
    mark(`${name} legend line and swatch on a card`, colour, t.surface)
  })
  text('names on the drawing', t.text, t.bg)
  text('small names on the drawing', t.dim, t.bg)
  text('turnout id in its tag', t.text, t.surface)
  text('area legend holder', t.dim, t.surface)
  return out
}

describe('the WCAG contrast formula', () => {
  it('gives the end points of the WCAG definition: white on black 21:1, a colour on itself 1:1 (WCAG 2.2 contrast ratio)', () => {
    expect(contrastRatio('#ffffff', '#000000')).toBeCloseTo(21, 10)
    expect(contrastRatio('#4a5d56', '#4a5d56')).toBe(1)
    expect(relativeLuminance('#ffffff')).toBeCloseTo(1, 10)
    expect(relativeLuminance('#000000')).toBe(0)
  })

  it('matches the npm package wcag-contrast on every themed colour pair', () => {
    for (const t of Object.values(themes)) {
      for (const p of pairs(t)) expect(contrastRatio(p.fg, p.bg), p.what).toBeCloseTo(referenceContrast(p.fg, p.bg), 3)
    }
  })
})

describe.each(Object.entries(themes))('the %s theme', (_name, theme) => {
  const all = pairs(theme)
  it.each(all.filter(p => p.sc === 'SC 1.4.3'))('SC 1.4.3 text 4.5:1: $what', (p) => {
    expect(contrastRatio(p.fg, p.bg), `${p.fg} on ${p.bg}`).toBeGreaterThanOrEqual(MINIMUM[p.sc])
  })
  it.each(all.filter(p => p.sc === 'SC 1.4.11'))('SC 1.4.11 non-text 3:1: $what', (p) => {
    expect(contrastRatio(p.fg, p.bg), `${p.fg} on ${p.bg}`).toBeGreaterThanOrEqual(MINIMUM[p.sc])
  })
})
