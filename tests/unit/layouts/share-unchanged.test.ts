// shareUnchanged keeps the parts of a layout an edit did not touch; node's util.isDeepStrictEqual is the
// outside reference for "unchanged", fast-check makes the data.
import { isDeepStrictEqual } from 'node:util'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { moveItem, shareUnchanged } from '#shared/layouts/editing'
import { demoLayout } from '../../support/live-fixtures'

const json = fc.jsonValue({ maxDepth: 4 })

describe('shareUnchanged', () => {
  it('gives a value deep-equal to the new one, and the old object itself when nothing changed', () => {
    fc.assert(fc.property(json, json, (a, b) => {
      const out = shareUnchanged(a, b)
      expect(isDeepStrictEqual(out, b)).toBe(true)
      if (isDeepStrictEqual(a, b)) expect(out).toBe(a)
    }))
    fc.assert(fc.property(json, (a) => { expect(shareUnchanged(a, structuredClone(a))).toBe(a) }))
  })

  it('keeps the identity of every block a move did not touch, and leaves the old layout as it was', () => {
    const before = demoLayout()
    const kept = structuredClone(before)
    const after = structuredClone(before)
    moveItem(after, { kind: 'block', id: 'UM2' }, 20, 0)
    const out = shareUnchanged(before, after)
    expect(out).not.toBe(before)
    expect(out.diagram.blocks.UM2).not.toBe(before.diagram.blocks.UM2)
    expect(out.diagram.blocks.UM2!.path[0]![0]).toBe(before.diagram.blocks.UM2!.path[0]![0] + 20)
    for (const id of Object.keys(before.diagram.blocks).filter(id => id !== 'UM2')) expect(out.diagram.blocks[id], id).toBe(before.diagram.blocks[id])
    expect(out.blocks).toBe(before.blocks)
    expect(out.diagram.signals).toBe(before.diagram.signals)
    expect(before).toEqual(kept)
  })
})
