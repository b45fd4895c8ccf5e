// Drawing helpers checked against the demo layout's own drawing data (shared/layouts/demo-layout.json).
import { describe, expect, it } from 'vitest'
import { blockAreaIndex, contentBounds, turnoutLegs } from '../../../shared/live/diagram'
import { demoLayout } from '../../support/live-fixtures'

const def = demoLayout()
const direction = (leg: [[number, number], [number, number]]) => {
  const dx = leg[1][0] - leg[0][0]
  const dy = leg[1][1] - leg[0][1]
  const len = Math.hypot(dx, dy)
  return [Math.round((dx / len) * 100) / 100, Math.round((dy / len) * 100) / 100]
}

describe('turnoutLegs', () => {
  it('points each leg of T1 from its point along the block it leads to', () => {
    // T1 at (960,200) in DM2: normal DM3 lies to the left along the down main, reverse JD runs to (760,400)
    const legs = turnoutLegs(def, 'T1')!
    expect(legs.normal[0]).toEqual([960, 200])
    expect(direction(legs.normal)).toEqual([-1, 0])
    expect(direction(legs.reverse)).toEqual([-0.71, 0.71])
  })

  it('gives every demo turnout two legs of the same length in different directions', () => {
    for (const t of def.turnouts) {
      const legs = turnoutLegs(def, t.id)!
      expect(direction(legs.normal)).not.toEqual(direction(legs.reverse))
      expect(Math.hypot(legs.normal[1][0] - legs.normal[0][0], legs.normal[1][1] - legs.normal[0][1])).toBeCloseTo(34, 6)
    }
  })
})

describe('contentBounds', () => {
  it('is the drawn part plus a margin, inside the drawing area', () => {
    // demo drawing: x from 80 (up main) to 1220 (up departure), y from 56 (station labels) to 768 (SF2);
    // the bottom margin stops at the drawing's height of 800
    expect(contentBounds(def, 40)).toEqual({ x: 40, y: 16, width: 1260 - 40, height: 800 - 16 })
  })
})

describe('blockAreaIndex', () => {
  it('puts a block under the first area with a signal into it or a turnout in it, fiddle roads under none', () => {
    const index = blockAreaIndex(def)
    expect(index.UM4).toBe(0) // SU3 and T4, Main line
    expect(index.UM2).toBe(1) // SU1, Branch & station
    expect(index.DM4).toBe(0) // T6 (Main line) comes before SD3 (Branch & station)
    expect(index.FY1).toBeUndefined()
  })
})
