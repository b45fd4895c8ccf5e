// Train descriptions typed at the panel. Headcode form: docs/sources.md §5 (digit, letter, two digits, e.g.
// 1F42, 2J01); the 16-character limit is the engine's (MAX_DESCRIPTION_LENGTH) and the protocol's.
import { describe, expect, it } from 'vitest'
import { MAX_DESCRIPTION_LENGTH } from '#shared/signalling'
import { DESCRIPTION_MAX, checkDescription } from '#shared/live/description'

describe('checkDescription', () => {
  it('uses the same limit as the engine', () => {
    expect(DESCRIPTION_MAX).toBe(MAX_DESCRIPTION_LENGTH)
  })

  it.each(['1F42', '2J01', '2T33', '1U29'])('accepts the headcode %s (docs/sources.md §5)', (h) => {
    expect(checkDescription(h)).toEqual({ ok: true, value: h })
  })

  it('writes capitals and tidies spaces', () => {
    expect(checkDescription('  1f42 ')).toEqual({ ok: true, value: '1F42' })
    expect(checkDescription('light   engine')).toEqual({ ok: true, value: 'LIGHT ENGINE' })
  })

  it('takes empty text as no description', () => {
    expect(checkDescription('   ')).toEqual({ ok: true, value: '' })
  })

  it('refuses more than 16 characters and stray signs', () => {
    expect(checkDescription('A'.repeat(16)).ok).toBe(true)
    expect(checkDescription('A'.repeat(17))).toEqual({ ok: false, message: 'A description is at most 16 characters.' })
    expect(checkDescription('1F42;').ok).toBe(false)
    expect(checkDescription('-1F42').ok).toBe(false)
    expect(checkDescription('<b>').ok).toBe(false)
  })
})
