import type { Config } from 'tailwindcss'
import plugin from 'tailwindcss/plugin'
import { blend } from './shared/theme/contrast'

// Blockbell's own palette: "night" greys with a green cast for dim layout rooms, "brass" for actions and
// focus, "tarn" blue for occupied track, and plain status colours that always travel with a word or a shape
// (never colour alone). Every colour of the app is spelt here once; CSS reads them through the themes below.
export const palette = {
  paper: '#ffffff',
  night: {
    50: '#eef3f1', 75: '#e2eae6', 100: '#d5dfdb', 200: '#aebfb8', 300: '#869c94', 400: '#627870',
    500: '#4a5d56', 600: '#374842', 700: '#273631', 800: '#1a2623', 900: '#121b19', 950: '#0b1110',
  },
  brass: { 300: '#f0cf84', 400: '#e6b655', 500: '#d49b2f', 600: '#b07c1f', 700: '#8a5f18', 800: '#7d5514' },
  tarn: { 300: '#5ccbf2', 700: '#0b6288' },
  ok: { 400: '#5fcf8f', 500: '#37b36f', 700: '#1d7a45', 800: '#186b3c' },
  warn: { 400: '#f2c14e', 500: '#e0a82a', 700: '#7d5600', 800: '#966000' },
  alarm: { 400: '#ff6f61', 500: '#e5483a', 600: '#c1352a', 700: '#a82c22' },
  sky: { 400: '#7fb3d5', 700: '#2f6f99' },
  heather: { 400: '#c79bd8', 700: '#7d4a94' },
} as const

/** What each colour is for, per theme. Read in CSS as `var(--bb-<role>)` and in classes as `bb-<role>`. */
export const THEME_ROLES = [
  'bg', 'surface', 'surface-2', 'border', 'border-strong', 'text', 'dim', 'accent', 'on-accent', 'accent-fill',
  'track-free', 'track-occupied', 'danger', 'caution', 'proceed', 'glyph', 'warn', 'on-warn', 'alarm', 'on-alarm', 'ok',
  'area-0', 'area-1', 'area-2', 'area-3', 'area-0-wash', 'area-1-wash', 'area-2-wash', 'area-3-wash',
] as const
export type ThemeColours = Record<typeof THEME_ROLES[number], string>
type AreaWash = `area-${0 | 1 | 2 | 3}-wash`

/**
 * An area's band on the diagram has edges in the area's full colour (3:1 and more against the ground) and an
 * inside tinted this much with it over the ground (`area-N-wash`), faint enough that the track drawn on the
 * band keeps 3:1 against it (tests/unit/theme/contrast.test.ts).
 */
export const AREA_WASH_SHARE = 0.12
const withWashes = (t: Omit<ThemeColours, AreaWash>): ThemeColours => ({
  ...t,
  'area-0-wash': blend(t['area-0'], t.bg, AREA_WASH_SHARE),
  'area-1-wash': blend(t['area-1'], t.bg, AREA_WASH_SHARE),
  'area-2-wash': blend(t['area-2'], t.bg, AREA_WASH_SHARE),
  'area-3-wash': blend(t['area-3'], t.bg, AREA_WASH_SHARE),
})

const p = palette
const chosen: { dark: Omit<ThemeColours, AreaWash>, light: Omit<ThemeColours, AreaWash> } = {
  dark: {
    'bg': p.night[950], 'surface': p.night[900], 'surface-2': p.night[800], 'border': p.night[700], 'border-strong': p.night[400],
    'text': p.night[50], 'dim': p.night[200], 'accent': p.brass[400], 'on-accent': p.night[950], 'accent-fill': p.brass[500],
    'track-free': p.night[400], 'track-occupied': p.tarn[300], 'danger': p.alarm[400], 'caution': p.warn[400], 'proceed': p.ok[400],
    'glyph': p.night[950], 'warn': p.warn[400], 'on-warn': p.night[950], 'alarm': p.alarm[400], 'on-alarm': p.paper, 'ok': p.ok[400],
    'area-0': p.sky[400], 'area-1': p.heather[400], 'area-2': p.brass[400], 'area-3': p.ok[400],
  },
  light: {
    'bg': p.night[50], 'surface': p.paper, 'surface-2': p.night[75], 'border': p.night[200], 'border-strong': p.night[400],
    'text': p.night[900], 'dim': p.night[600], 'accent': p.brass[800], 'on-accent': p.night[950], 'accent-fill': p.brass[500],
    'track-free': p.night[400], 'track-occupied': p.tarn[700], 'danger': p.alarm[700], 'caution': p.warn[800], 'proceed': p.ok[700],
    'glyph': p.paper, 'warn': p.warn[700], 'on-warn': p.paper, 'alarm': p.alarm[700], 'on-alarm': p.paper, 'ok': p.ok[800],
    'area-0': p.sky[700], 'area-1': p.heather[700], 'area-2': p.brass[800], 'area-3': p.ok[700],
  },
}
export const themes: { dark: ThemeColours, light: ThemeColours } = { dark: withWashes(chosen.dark), light: withWashes(chosen.light) }

const cssVars = (t: ThemeColours) => Object.fromEntries(Object.entries(t).map(([k, v]) => [`--bb-${k}`, v]))

export default {
  darkMode: 'class',
  content: [],
  theme: {
    extend: {
      fontFamily: { sans: ['Barlow', 'ui-sans-serif', 'system-ui', 'sans-serif'] },
      colors: {
        ...palette,
        bb: Object.fromEntries(THEME_ROLES.map(k => [k, `var(--bb-${k})`])),
      },
      minHeight: { touch: '44px' },
      minWidth: { touch: '44px' },
    },
  },
  plugins: [
    plugin(({ addBase }) => addBase({
      ':root': { ...cssVars(themes.dark), colorScheme: 'dark' },
      'html.light': { ...cssVars(themes.light), colorScheme: 'light' },
    })),
  ],
} satisfies Config
