// Which controls the panel offers (README "Roles": signallers work the signals and turnouts of areas they
// hold, admins may also force-release, viewers watch only). Demo layout areas: main (Main line), branch.
import { describe, expect, it } from 'vitest'
import { areaActions, areaOfBlock, areaVerdict, handOverCandidates, interposeVerdict, signalVerdict, turnoutVerdict } from '#shared/live/rights'
import { ADA, MILO, RHEA, TAM, demoLayout } from '../../support/live-fixtures'

const def = demoLayout()

describe('signal and turnout controls', () => {
  it('are offered to the signaller holding the area, to nobody else', () => {
    const holders = { main: TAM, branch: null }
    expect(signalVerdict(TAM, def, holders, 'SU3').allowed).toBe(true)
    expect(turnoutVerdict(TAM, def, holders, 'T4').allowed).toBe(true)
    const other = signalVerdict(RHEA, def, holders, 'SU3')
    expect(other).toMatchObject({ allowed: false, reason: 'Tam Oakridge holds Main line; only the holder works this signal.' })
    expect(signalVerdict(ADA, def, holders, 'SU3').allowed).toBe(false)
    expect(signalVerdict(TAM, def, holders, 'SU1')).toMatchObject({ allowed: false, reason: 'Nobody holds Branch & station. Take the area to work this signal.' })
  })

  it('are never offered to a viewer, even one recorded as holder', () => {
    const v = signalVerdict(MILO, def, { main: MILO, branch: null }, 'SU3')
    expect(v).toMatchObject({ allowed: false, reason: 'You are signed in as a viewer: you can watch, not operate.' })
  })
})

describe('demo areas', () => {
  it('put the up and down main through Wrenfold Junction with the Main line, the platforms with the station', () => {
    const area = (b: string) => areaOfBlock(def, b)?.id
    expect(['UM1', 'UM3', 'UM4', 'DM1', 'DM2', 'DM4'].map(area)).toEqual(['main', 'main', 'main', 'main', 'main', 'main'])
    expect(['UM2', 'DM3', 'CP'].map(area)).toEqual(['branch', 'branch', 'branch'])
  })
})

describe('unattended areas', () => {
  it('may be taken by another signaller, who is told whose it was; not by a viewer', () => {
    const main = def.areas.find(a => a.id === 'main')!
    const holders = { main: TAM, branch: null }
    expect(areaVerdict(RHEA, holders, main, 'take').allowed).toBe(false)
    expect(areaVerdict(RHEA, holders, main, 'take', { main: 1 }).allowed).toBe(true)
    expect(areaVerdict(MILO, holders, main, 'take', { main: 1 }).allowed).toBe(false)
    expect(areaActions(RHEA, holders, main, { main: 1 })).toMatchObject({ take: true, takeOver: true, note: expect.stringContaining('Unattended: Tam Oakridge') })
    expect(areaActions(RHEA, holders, main)).toMatchObject({ take: false, takeOver: false })
  })
})

describe('interpose', () => {
  it('needs the area of the block (the first area with a signal into it or a turnout in it)', () => {
    // DM4: turnout T6 (Main line) and signal SD3 (Branch & station) -> Main line comes first in the definition
    expect(interposeVerdict(TAM, def, { main: TAM, branch: null }, 'DM4').allowed).toBe(true)
    expect(interposeVerdict(RHEA, def, { main: TAM, branch: RHEA }, 'DM4').allowed).toBe(false)
    expect(interposeVerdict(RHEA, def, { main: TAM, branch: RHEA }, 'UM2').allowed).toBe(true)
  })

  it('in a block of no area (a fiddle road), needs any area held', () => {
    expect(interposeVerdict(RHEA, def, { main: TAM, branch: RHEA }, 'FY1').allowed).toBe(true)
    expect(interposeVerdict(RHEA, def, { main: TAM, branch: null }, 'FY1').allowed).toBe(false)
    expect(interposeVerdict(MILO, def, { main: null, branch: null }, 'FY1').allowed).toBe(false)
  })
})

describe('area bar', () => {
  const main = def.areas.find(a => a.id === 'main')!
  it.each([
    ['a signaller, area free', TAM, null, { take: true, release: false, handOver: false, forceRelease: false }],
    ['the holder', TAM, TAM, { take: false, release: true, handOver: true, forceRelease: false }],
    ['another signaller', RHEA, TAM, { take: false, release: false, handOver: false, forceRelease: false }],
    ['an admin, held by another', ADA, TAM, { take: false, release: false, handOver: false, forceRelease: true }],
    ['a viewer', MILO, TAM, { take: false, release: false, handOver: false, forceRelease: false }],
  ] as const)('offers %s the right actions', (_, user, holder, expected) => {
    expect(areaActions(user, { main: holder, branch: null }, main)).toMatchObject(expected)
  })

  it('explains to others why they cannot act', () => {
    expect(areaActions(RHEA, { main: TAM }, main).note).toBe('Held by Tam Oakridge: ask them to release or hand it over.')
    expect(areaActions(MILO, { main: TAM }, main).note).toBe('Viewers watch only.')
  })

  it('hands over only to other connected signallers and admins, each once', () => {
    expect(handOverCandidates(TAM, [ADA, TAM, RHEA, MILO, RHEA]).map(u => u.name)).toEqual(['Ada Wrenfield', 'Rhea Lintwhistle'])
  })
})
