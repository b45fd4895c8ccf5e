import { describe, expect, it } from 'vitest'
import { LayoutDefinition, type Layout } from '#shared/schemas/layout'
import { validateLayout } from '#shared/signalling'
import { addBlock, addSignal, addTurnout, deleteItem, dragMoves, dragStep, itemOfError, moveItem, movePathPoint, renameId, snap, trackEndFollowers } from '#shared/layouts/editing'

const empty = (): Layout => LayoutDefinition.parse({ schema: 1, name: 'Sallow Light', scale: { name: 'N', ratio: 148 }, blocks: [{ id: 'X', name: 'x', lengthMm: 1, detectors: [] }], links: [] })

/** A line B1 -> B2 -> B3 with a siding B4 leaving the end of B2, drawn as the editor's tests draw it. */
function junction(): Layout {
  const d = empty()
  deleteItem(d, { kind: 'block', id: 'X' })
  addBlock(d, [[200, 400], [400, 400]])
  addBlock(d, [[400, 400], [600, 400]])
  addBlock(d, [[600, 400], [800, 400]])
  addBlock(d, [[600, 400], [680, 480], [840, 480]])
  return d
}

describe('editing a layout', () => {
  it('snaps to the 20-unit grid', () => {
    expect(snap([29, 11])).toEqual([20, 20])
    expect(snap([-9, 31])).toEqual([-0, 40])
  })

  it('joins a block drawn from where another ends with a link in the direction drawn', () => {
    const d = junction()
    expect(d.blocks.map(b => b.id)).toEqual(['B1', 'B2', 'B3', 'B4'])
    expect(d.links).toEqual([{ from: 'B1', to: 'B2' }, { from: 'B2', to: 'B3' }, { from: 'B2', to: 'B4' }])
    expect(d.blocks[0]!.detectors).toEqual(['D1'])
  })

  it('places a turnout where the legs part, with the onward blocks as its legs, and the layout validates', () => {
    const d = junction()
    expect(validateLayout(d).ok).toBe(false) // B2 forks with no turnout
    expect(addTurnout(d, [602, 397], 30)).toBe('T1')
    expect(d.turnouts).toEqual([{ id: 'T1', block: 'B2', normal: 'B3', reverse: 'B4' }])
    expect(addSignal(d, [380, 420], 30)).toBe('S1')
    expect(d.signals[0]).toMatchObject({ from: 'B1', protects: 'B2', kind: 'three-aspect' })
    expect(d.diagram.signals.S1).toEqual({ at: [380, 420], facing: 'right' })
    expect(validateLayout(d)).toMatchObject({ ok: true })
  })

  it('deletes a block with everything that refers to it', () => {
    const d = junction()
    addTurnout(d, [600, 400], 30)
    addSignal(d, [380, 420], 30)
    d.areas.push({ id: 'sallow', name: 'Sallow', signals: ['S1'], turnouts: ['T1'] })
    deleteItem(d, { kind: 'block', id: 'B2' })
    expect(d.links).toEqual([])
    expect(d.signals).toEqual([])
    expect(d.turnouts).toEqual([])
    expect(d.areas[0]).toMatchObject({ signals: [], turnouts: [] })
    expect(d.diagram.blocks.B2).toBeUndefined()
  })

  it('renames an id everywhere, and refuses one already used', () => {
    const d = junction()
    addTurnout(d, [600, 400], 30)
    expect(renameId(d, { kind: 'block', id: 'B2' }, 'SALLOW')).toBe(true)
    expect(d.links).toContainEqual({ from: 'SALLOW', to: 'B3' })
    expect(d.turnouts[0]!.block).toBe('SALLOW')
    expect(d.diagram.blocks.SALLOW).toBeDefined()
    expect(renameId(d, { kind: 'block', id: 'B3' }, 'B4')).toBe(false)
  })

  it('moves a block with its berth, kept inside the drawing', () => {
    const d = junction()
    moveItem(d, { kind: 'block', id: 'B1' }, -300, 20)
    expect(d.diagram.blocks.B1!.path).toEqual([[0, 420], [100, 420]])
  })

  it('moves one bend of a track onto the grid and leaves the other points and the berth where they were', () => {
    const d = junction()
    const label = d.diagram.blocks.B4!.label
    movePathPoint(d, 'B4', 1, 27, -48)
    // (680,480) + (27,-48) = (707,432), nearest grid point (20 units) is (700,440)
    expect(d.diagram.blocks.B4!.path).toEqual([[600, 400], [700, 440], [840, 480]])
    expect(d.diagram.blocks.B4!.label).toEqual(label)
    // kept inside the drawing area; a point that is not there or a block not drawn changes nothing
    movePathPoint(d, 'B4', 2, 5000, 5000)
    expect(d.diagram.blocks.B4!.path[2]).toEqual([d.diagram.width, d.diagram.height])
    const before = structuredClone(d.diagram.blocks)
    movePathPoint(d, 'B4', 3, 20, 20)
    movePathPoint(d, 'B9', 0, 20, 20)
    expect(d.diagram.blocks).toEqual(before)
  })

  // The junction with its turnout T1 where B2 parts into B3 and B4 (600,400), S1 at the exit of B1 (380,420)
  // and S2 at the exit of B2 (580,420), both drawn beside the track before the joint they stand at.
  function signalledJunction(): Layout {
    const d = junction()
    addTurnout(d, [600, 400], 30)
    addSignal(d, [380, 420], 30)
    addSignal(d, [580, 420], 30)
    return d
  }

  it('takes the joined ends, the signal and the turnout at an end of a track along when that end is dragged', () => {
    const d = signalledJunction()
    expect(trackEndFollowers(d, 'B2', 1)).toEqual({ ends: [{ block: 'B3', index: 0 }, { block: 'B4', index: 0 }], signals: ['S2'], turnouts: ['T1'] })
    // (600,400) + (41,-62) = (641,338): on the 20-unit grid (640,340), so the end moved by (40,-60) (worked by hand)
    movePathPoint(d, 'B2', 1, 41, -62)
    expect(d.diagram.blocks.B2!.path).toEqual([[400, 400], [640, 340]])
    expect(d.diagram.blocks.B3!.path).toEqual([[640, 340], [800, 400]])
    expect(d.diagram.blocks.B4!.path).toEqual([[640, 340], [680, 480], [840, 480]])
    expect(d.diagram.turnouts.T1!.at).toEqual([640, 340])
    // the signal keeps its place beside the end: moved by as much as the end
    expect(d.diagram.signals.S2!.at).toEqual([620, 360])
    // what stands at the other end of B2 (S1 at the exit of B1) and B1 itself stay
    expect(d.diagram.signals.S1!.at).toEqual([380, 420])
    expect(d.diagram.blocks.B1!.path).toEqual([[200, 400], [400, 400]])
    expect(validateLayout(d)).toMatchObject({ ok: true })
  })

  it('takes the signal of the neighbour that ends at the dragged end along too', () => {
    const d = signalledJunction()
    // B2 starts where B1 ends, and S1 stands at the exit of B1 there
    expect(trackEndFollowers(d, 'B2', 0)).toEqual({ ends: [{ block: 'B1', index: 1 }], signals: ['S1'], turnouts: [] })
    movePathPoint(d, 'B2', 0, 0, 40)
    expect(d.diagram.blocks.B1!.path).toEqual([[200, 400], [400, 440]])
    expect(d.diagram.blocks.B2!.path).toEqual([[400, 440], [600, 400]])
    expect(d.diagram.signals.S1!.at).toEqual([380, 460])
    expect(d.diagram.signals.S2!.at).toEqual([580, 420])
  })

  it('moves a bend, and an end with nothing at it, alone', () => {
    const d = signalledJunction()
    expect(trackEndFollowers(d, 'B4', 1)).toEqual({ ends: [], signals: [], turnouts: [] })
    // the start of the line: S1 stands at the other end of B1, so it stays
    expect(trackEndFollowers(d, 'B1', 0)).toEqual({ ends: [], signals: [], turnouts: [] })
    const before = structuredClone(d)
    movePathPoint(d, 'B1', 0, -40, 0)
    expect(d.diagram.blocks.B1!.path).toEqual([[160, 400], [400, 400]])
    expect({ ...d.diagram, blocks: { ...d.diagram.blocks, B1: before.diagram.blocks.B1 } }).toEqual(before.diagram)
  })

  it('makes each step of a drag a new layout that shares what did not move and leaves the start as it was', () => {
    const start = signalledJunction()
    const kept = structuredClone(start)
    expect(dragMoves(start, { kind: 'block', id: 'B2' }, 1)).toEqual({ blocks: ['B2', 'B3', 'B4'], berths: [], signals: ['S2'], turnouts: ['T1'], labels: [] })
    expect(dragMoves(start, { kind: 'block', id: 'B2' }, null)).toEqual({ blocks: ['B2'], berths: ['B2'], signals: [], turnouts: [], labels: [] })
    expect(dragMoves(start, { kind: 'signal', id: 'S1' }, null)).toMatchObject({ blocks: [], signals: ['S1'] })
    const step = dragStep(start, { kind: 'block', id: 'B2' }, 1, 40, -60)
    expect(start).toEqual(kept)
    expect(step.diagram.blocks.B3!.path[0]).toEqual([640, 340])
    expect(step.diagram.signals.S2!.at).toEqual([620, 360])
    // untouched parts are the start's own objects
    expect(step.diagram.blocks.B1).toBe(start.diagram.blocks.B1)
    expect(step.diagram.signals.S1).toBe(start.diagram.signals.S1)
    expect(step.blocks).toBe(start.blocks)
    expect(step.signals).toBe(start.signals)
    // the same as the edit made in place on a copy
    const inPlace = structuredClone(kept)
    movePathPoint(inPlace, 'B2', 1, 40, -60)
    expect(step).toEqual(inPlace)
    const whole = dragStep(start, { kind: 'block', id: 'B2' }, null, 20, 20)
    expect(whole.diagram.blocks.B2!.path).toEqual([[420, 420], [620, 420]])
    expect(whole.diagram.blocks.B3).toBe(start.diagram.blocks.B3)
    expect(whole.diagram.signals).toBe(start.diagram.signals)
  })

  it('finds the item an error is about from its path', () => {
    const d = junction()
    const errors = validateLayout(d)
    expect(errors.ok).toBe(false)
    if (errors.ok) return
    expect(errors.errors.map(e => itemOfError(d, e.path))).toContainEqual({ kind: 'block', id: 'B2' })
    expect(itemOfError(d, 'diagram.signals.S9.at')).toEqual({ kind: 'signal', id: 'S9' })
    expect(itemOfError(d, 'links[1].to')).toEqual({ kind: 'link', id: 'B2>B3' })
    expect(itemOfError(d, 'name')).toBeNull()
  })
})
