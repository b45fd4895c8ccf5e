import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { describe, expect, it } from 'vitest'
import { readTurnoutMemory, turnoutMemoryWriter } from '../../../fake-hardware/turnout-memory'
import { parseOptions } from '../../../fake-hardware/options'
import { demoLayout } from './harness'

describe('the fake layout\'s turnout memory', () => {
  const dir = mkdtempSync(join(tmpdir(), 'blockbell-turnouts-'))

  it('keeps each position as it is reported, and reads it back next time', () => {
    const path = join(dir, 'kept.json')
    // nothing kept yet: no positions at all (a layout seen for the first time), not "every turnout known normal"
    expect(readTurnoutMemory(path, demoLayout())).toMatchObject({ positions: null, note: expect.stringMatching(/^no turnout positions kept in .* yet: .*first routes before they are reported$/) })
    const remember = turnoutMemoryWriter(path, {})
    remember('T5', 'reverse')
    remember('T3', 'reverse')
    remember('T3', 'normal')
    expect(JSON.parse(readFileSync(path, 'utf8'))).toEqual({ T5: 'reverse', T3: 'normal' })
    expect(readTurnoutMemory(path, demoLayout()).positions).toEqual({ T5: 'reverse', T3: 'normal' })
  })

  it('takes a file that is not JSON for no positions at all, and ignores ids or positions the layout does not have', () => {
    const broken = join(dir, 'broken.json')
    writeFileSync(broken, '{"T5": "rev')
    expect(readTurnoutMemory(broken, demoLayout())).toMatchObject({ positions: null, note: expect.stringMatching(/^ignoring .*; turnouts start normal, set for the trains' first routes before they are reported$/) })
    const odd = join(dir, 'odd.json')
    writeFileSync(odd, JSON.stringify({ T5: 'reverse', T99: 'reverse', T4: 'unknown', T6: 3 }))
    expect(readTurnoutMemory(odd, demoLayout()).positions).toEqual({ T5: 'reverse' })
  })

  it('is switched on by --turnout-memory or BLOCKBELL_FAKE_TURNOUT_MEMORY, and off by default', () => {
    const off = parseOptions([], {})
    expect(off.ok && off.options.turnoutMemory).toBe(null)
    const flag = parseOptions(['--turnout-memory', '/tmp/t.json'], {})
    expect(flag.ok && flag.options.turnoutMemory).toBe('/tmp/t.json')
    const env = parseOptions([], { BLOCKBELL_FAKE_TURNOUT_MEMORY: '.data/t.json' })
    expect(env.ok && env.options.turnoutMemory).toBe('.data/t.json')
  })
})
