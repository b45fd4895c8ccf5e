// The signal sheet's "why": a signal set to Clear shows danger while its own section is occupied (DESIGN.md
// "Overrides": clear = proceed whenever its own section is free), so the sheet names the occupied block.
import { describe, expect, it } from 'vitest'
import { dangerReason } from '#shared/live/why'
import { DemoRun, demoLayout } from '../../support/live-fixtures'

const def = demoLayout()

describe('dangerReason', () => {
  it('names the occupied block of the section of a signal set to Clear', () => {
    const run = new DemoRun()
    run.event({ type: 'override', signal: 'SU2', mode: 'clear' })
    expect(dangerReason(def, run.liveState(), 'SU2')).toBeNull() // its section is free: it shows proceed
    run.occupy('UM3')
    expect(run.liveState().indications.SU2!.aspect).toBe('danger')
    expect(dangerReason(def, run.liveState(), 'SU2')).toBe('Clear, but its section UM3 (Wrenfold Junction up) is occupied.')
  })

  it('says held, or danger with the reason, for the other settings', () => {
    const run = new DemoRun()
    run.occupy('UM3')
    expect(dangerReason(def, run.liveState(), 'SU2')).toBe('Danger: its section UM3 (Wrenfold Junction up) is occupied.')
    run.hold('SU1')
    expect(dangerReason(def, run.liveState(), 'SU1')).toBe('Held at danger by hand.')
    expect(dangerReason(def, run.liveState(), 'SU3')).toBeNull()
  })
})
