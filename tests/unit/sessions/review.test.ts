import { describe, expect, it } from 'vitest'
import { createEngine } from '#shared/signalling'
import { namesOf } from '#shared/live/feed'
import { describeJournalRow } from '#shared/live/journal-text'
import { areaIntervals } from '#shared/live/session-areas'
import { buildTimeDistance } from '#shared/live/session-graph'
import { journalEntryToEvent } from '#shared/live/session-fold'
import { formatDuration } from '#shared/utils/duration'
import { stringify } from 'csv-stringify/sync'
import { valid, block } from '../signalling/build'

// A 1 m block in the middle of a line, in OO (1:76.2) and N (1:160), for the worked scale-speed examples.
function lineOf(ratio: number) {
  return valid({
    schema: 1, name: 'speed line', scale: { name: ratio === 160 ? 'N' : 'OO', ratio },
    blocks: [block('A', 1000), block('B', 1000), block('C', 1000)],
    links: [{ from: 'A', to: 'B' }, { from: 'B', to: 'C' }],
  })
}

/** Runs a described train A -> B -> C, entering B at t0 and C `seconds` later; the engine's speed over B. */
function speedOverB(ratio: number, seconds: number) {
  const layout = lineOf(ratio)
  const engine = createEngine(layout)
  const t0 = 1_767_000_000_000
  engine.apply({ type: 'detector', detector: 'dA', occupied: true, at: t0 - 4000 })
  engine.apply({ type: 'interpose', block: 'A', description: '2K07', at: t0 - 3000 })
  engine.apply({ type: 'detector', detector: 'dB', occupied: true, at: t0 })
  engine.apply({ type: 'detector', detector: 'dA', occupied: false, at: t0 + 100 })
  const changes = engine.apply({ type: 'detector', detector: 'dC', occupied: true, at: t0 + seconds * 1000 })
  return changes.find(c => c.type === 'speed' && c.block === 'B') as { kmh: number, mph: number, seconds: number }
}

describe('scale speeds shown in the review', () => {
  it('agree with REFERENCES §3 case 6: OO 1:76.2, a 1 m block in 5 s = 54.86 km/h, 34.09 mph', () => {
    const s = speedOverB(76.2, 5)
    expect(s.seconds).toBe(5)
    expect(s.kmh).toBeCloseTo(54.86, 2)
    expect(s.mph).toBeCloseTo(34.09, 2)
    expect(s.kmh.toFixed(1)).toBe('54.9') // as the review's table prints it
  })
  it('agree with REFERENCES §3 case 5: N 1:160, a 1 m block in 10 s = 57.60 km/h, 35.79 mph (time in real seconds)', () => {
    const s = speedOverB(160, 10)
    expect(s.kmh).toBeCloseTo(57.6, 2)
    expect(s.mph).toBeCloseTo(35.79, 2)
  })
})

describe('journal rows in words', () => {
  const layout = lineOf(76.2)
  const n = namesOf(layout)
  it('says a signal passed at danger with the train and the block it entered', () => {
    const text = describeJournalRow(n, { type: 'alarm', subject: 'S2', payload: { alarm: { signal: 'SU2', block: 'UM3', description: '1F23' } }, person: null }, () => null)
    expect(text).toBe('SU2 passed at danger by 1F23 entering UM3')
  })
  it('names who acknowledged, from the id in the alarm', () => {
    const text = describeJournalRow(n, { type: 'alarm-acknowledged', subject: 'S2', payload: { alarm: { signal: 'S2', acknowledgedBy: '7' } }, person: null }, id => (id === '7' ? 'Tam Oakridge' : null))
    expect(text).toBe('Alarm at S2 acknowledged by Tam Oakridge')
  })
  it('words a hand-over and a description step', () => {
    expect(describeJournalRow(n, { type: 'command', subject: 'main', payload: { action: 'hand-over', area: 'main', to: 3 }, person: 'Tam Oakridge' }, () => 'Rhea Lintwhistle'))
      .toBe('Tam Oakridge handed main over to Rhea Lintwhistle')
    expect(describeJournalRow(n, { type: 'description', subject: 'B', payload: { description: '1F23', block: 'B', from: 'A', reason: 'step' }, person: null }, () => null))
      .toBe('1F23 stepped from A into B')
  })
})

describe('replay folding', () => {
  it('turns journaled inputs into engine events and skips what is not an input', () => {
    expect(journalEntryToEvent({ type: 'command', at: 5, userId: 2, payload: { action: 'set-override', signal: 'S1', mode: 'hold', revision: 0 } }))
      .toEqual({ type: 'override', signal: 'S1', mode: 'hold', at: 5, by: '2' })
    expect(journalEntryToEvent({ type: 'detector-input', at: 9, userId: null, payload: { type: 'detector', detector: 'dA', occupied: true, at: 9 } }))
      .toEqual({ type: 'detector', detector: 'dA', occupied: true, at: 9 })
    expect(journalEntryToEvent({ type: 'command', at: 5, userId: 2, payload: { action: 'take-area', area: 'main' } })).toBeNull()
    expect(journalEntryToEvent({ type: 'block', at: 5, userId: null, payload: { block: 'A', occupied: true } })).toBeNull()
  })
})

describe('area shifts', () => {
  it('counts from the holders at the start, through take, hand-over and release, to the end', () => {
    const tam = { id: 2, name: 'Tam Oakridge', role: 'signaller' as const }
    const shifts = areaIntervals({ main: tam, branch: null }, 0, [
      { at: 100, area: 'branch', action: 'take-area', userId: 3 },
      { at: 200, area: 'main', action: 'hand-over', userId: 2, to: 3 },
      { at: 300, area: 'branch', action: 'release-area', userId: 3 },
    ], 1000)
    expect(shifts).toEqual([
      { area: 'main', userId: 2, from: 0, to: 200 },
      { area: 'branch', userId: 3, from: 100, to: 300 },
      { area: 'main', userId: 3, from: 200, to: 1000 },
    ])
  })
})

describe('time-distance graph', () => {
  const route = [{ id: 'A', name: 'A', lengthMm: 1000 }, { id: 'B', name: 'B', lengthMm: 500 }, { id: 'C', name: 'C', lengthMm: 2000 }]
  it('draws a train at each block start along the route, ending at the far end of its last block', () => {
    const g = buildTimeDistance(route, [
      { at: 10, block: 'A', description: '1F23', reason: 'interpose' },
      { at: 20, block: 'B', description: '1F23', reason: 'step' },
      { at: 25, block: 'A', description: null, reason: 'clear' },
      { at: 30, block: 'C', description: '1F23', reason: 'step' },
      { at: 50, block: 'C', description: null, reason: 'clear' },
    ], [{ at: 30, block: 'C', signal: 'S3', description: '1F23' }], 0, 60)
    expect(g.route.map(b => b.startMm)).toEqual([0, 1000, 1500])
    expect(g.trains).toEqual([{ description: '1F23', points: [[10, 0], [20, 1000], [30, 1500], [50, 3500]] }])
    expect(g.dangerPasses).toEqual([{ at: 30, mm: 1500, signal: 'S3', description: '1F23' }])
  })
  it('breaks the line where the train skips along the route', () => {
    const g = buildTimeDistance(route, [
      { at: 10, block: 'A', description: '2K07', reason: 'interpose' },
      { at: 30, block: 'C', description: '2K07', reason: 'step' },
    ], [], 0, 60)
    expect(g.trains[0]!.points).toEqual([[10, 0], null, [30, 1500]])
  })
})

describe('CSV', () => {
  it('quotes as RFC 4180 §2 (REFERENCES §11 check value) with CRLF record ends', () => {
    const out = stringify([['SU2 "hold", by Tam', 'plain']], { record_delimiter: 'windows' })
    expect(out).toBe('"SU2 ""hold"", by Tam",plain\r\n')
  })
})

describe('durations', () => {
  it('reads as hours and minutes', () => {
    expect(formatDuration(2 * 3600 + 5 * 60 + 9)).toBe('2 h 05 min')
    expect(formatDuration(250)).toBe('4 min 10 s')
  })
})
