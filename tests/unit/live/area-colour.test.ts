// An area's colour on the diagram: picked by the owner and stored in the layout, else given by the area's place.
import { describe, expect, it } from 'vitest'
import { areaColour } from '#shared/live/diagram'
import { AREA_COLOUR_NAMES, LayoutDefinition } from '#shared/schemas/layout'
import { THEME_ROLES, themes } from '../../../tailwind.config'
import { demoLayout } from '../../support/live-fixtures'

const def = demoLayout()
const withColours = (colours: (number | undefined)[]) => ({
  ...def,
  areas: colours.map((colour, i) => ({ id: `a${i}`, name: `Area ${i}`, signals: [], turnouts: [], ...(colour === undefined ? {} : { colour }) })),
})

describe('areaColour', () => {
  it('gives an area without a choice the colour of its place in the list, round again after the fourth', () => {
    const areas = withColours([undefined, undefined, undefined, undefined, undefined, undefined]).areas
    expect(areas.map((a, i) => areaColour(a, i))).toEqual([0, 1, 2, 3, 0, 1])
  })

  it('gives an area the colour stored in the layout, whatever its place', () => {
    const parsed = LayoutDefinition.parse(withColours([2, undefined, 0]))
    expect(parsed.areas.map((a, i) => areaColour(a, i))).toEqual([2, 1, 0])
  })

  it('keeps the demo layout, saved before areas had colours, valid and coloured as before', () => {
    const parsed = LayoutDefinition.parse(def)
    expect(parsed.areas.every(a => a.colour === undefined)).toBe(true)
    expect(parsed.areas.map((a, i) => areaColour(a, i))).toEqual(parsed.areas.map((_, i) => i % 4))
  })

  it.each([4, -1, 1.5, '2'])('refuses colour %s and names the field', (colour) => {
    const r = LayoutDefinition.safeParse(withColours([colour as number]))
    expect(r.success).toBe(false)
    expect(r.error!.issues[0]!.path).toEqual(['areas', 0, 'colour'])
  })

  it('has a theme colour, in both themes, for every colour the owner can pick', () => {
    AREA_COLOUR_NAMES.forEach((_, i) => {
      expect(THEME_ROLES).toContain(`area-${i}`)
      expect(themes.dark[`area-${i}` as 'area-0']).toMatch(/^#[0-9a-f]{6}$/)
      expect(themes.light[`area-${i}` as 'area-0']).toMatch(/^#[0-9a-f]{6}$/)
      // and the faint inside of its band
      expect(THEME_ROLES).toContain(`area-${i}-wash`)
    })
    expect(THEME_ROLES.filter(r => /^area-\d+$/.test(r))).toHaveLength(AREA_COLOUR_NAMES.length)
    expect(THEME_ROLES.filter(r => /^area-\d+-wash$/.test(r))).toHaveLength(AREA_COLOUR_NAMES.length)
  })
})
