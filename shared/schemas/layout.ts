import { z } from './zod'
import { END_OF_LINE, SIGNAL_KINDS, TURNOUT_LEGS } from '../signalling/values'

/**
 * Blockbell layout definition, format 1.
 *
 * A layout is a directed graph of blocks in the direction of travel: `links` say which block a train can
 * run into from which (a line worked both ways has a link each way). Turnouts sit in a block and choose
 * between two neighbouring blocks (its legs). Signals stand at the exit of `from` and read into `protects`.
 * `diagram` is the drawing of the mimic diagram (SVG user units); it has no say in the signalling.
 *
 * This file checks the shape only. The cross-references (unknown ids, forks, legs, areas, diagram entries)
 * are checked by `validateLayout` in shared/signalling.
 */

/**
 * Ids name blocks, detectors, signals, turnouts and areas. They appear in MQTT topics
 * (`blockbell/v1/<layout>/detector/<id>`), so they never contain `/`, `+`, `#` or spaces.
 */
export const ItemId = z
  .string()
  .regex(/^[A-Za-z0-9][A-Za-z0-9_.-]{0,39}$/, 'an id is 1-40 letters, digits, "_", "." or "-", starting with a letter or digit')

const Name = z.string().trim().min(1, 'a name is required').max(80, 'a name is at most 80 characters')

/** A point on the diagram: [x, y] in SVG user units, y downwards. */
export const DiagramPoint = z.tuple([z.number(), z.number()])

export const Scale = z.object({
  /** Scale name as modellers say it, e.g. "OO", "HO", "N". */
  name: z.string().trim().min(1).max(20),
  /** Scale ratio 1:N, e.g. 76.2 for OO. */
  ratio: z.number().positive('a scale ratio is a positive number').max(1000),
})

export const Block = z.object({
  id: ItemId,
  name: Name,
  /** Length of the block along the track, in millimetres on the model. */
  lengthMm: z.number().positive('a block length is a positive number of millimetres').max(1_000_000),
  /** Detectors that report occupancy of this block; the block is occupied while any of them is. */
  detectors: z.array(ItemId),
})

/** A train can run from block `from` into block `to`. */
export const Link = z.object({ from: ItemId, to: ItemId })

export const TurnoutPositionName = z.enum(TURNOUT_LEGS)

/**
 * A turnout in `block` chooses between two neighbouring blocks, its legs `normal` and `reverse`.
 * A train entering `block` from elsewhere and leaving by a leg runs through it facing (the turnout must be
 * set for that leg); a train entering from a leg runs through it trailing (it must be set for that leg).
 */
export const Turnout = z.object({
  id: ItemId,
  block: ItemId,
  normal: ItemId,
  reverse: ItemId,
})

export const SignalKind = z.enum(SIGNAL_KINDS)
export const EndOfLine = z.enum(END_OF_LINE)

export const Signal = z.object({
  id: ItemId,
  name: Name,
  kind: SignalKind,
  /** The block at whose exit the signal stands. */
  from: ItemId,
  /** The block the signal reads into; `from` -> `protects` is a link. */
  protects: ItemId,
  /**
   * Junction indicator: position shown (e.g. "1" to "6") when the route set from this signal takes the
   * diverging leg with this block id. No entry for the straight route.
   */
  indicators: z.record(ItemId, z.string().trim().min(1).max(8)).optional(),
  /** How the signal reads when no next signal follows on its route. Default "danger-ahead". */
  endOfLine: EndOfLine.optional(),
})

/** The colours an area of control can be drawn in, as the owner sees them named (the theme's roles area-0..3). */
export const AREA_COLOUR_NAMES = ['Sky blue', 'Heather', 'Brass', 'Green'] as const

export const Area = z.object({
  id: ItemId,
  name: Name,
  signals: z.array(ItemId),
  turnouts: z.array(ItemId),
  /** The area's colour on the diagram (index into AREA_COLOUR_NAMES). Default: by the area's place in the list. */
  colour: z.number().int().min(0).max(AREA_COLOUR_NAMES.length - 1).optional(),
})

/** Direction of travel of the trains that read a signal, as drawn on the diagram. */
export const DiagramFacing = z.enum(['left', 'right', 'up', 'down'])

/**
 * Drawing data for the mimic diagram.
 * - `width` x `height`: the drawing area (SVG viewBox `0 0 width height`).
 * - `blocks[blockId].path`: the track of the block as a polyline, in the direction the block is usually run;
 *   `label` is where its train description (berth) and name are written.
 * - `signals[signalId]`: where the signal head is drawn and the direction of travel it faces.
 * - `turnouts[turnoutId].at`: the point where the turnout's legs part.
 * - `labels`: free text on the diagram (station names and the like).
 * Every point lies inside the drawing area.
 */
export const Diagram = z.object({
  width: z.number().positive().max(20_000),
  height: z.number().positive().max(20_000),
  blocks: z
    .record(ItemId, z.object({ path: z.array(DiagramPoint).min(2, 'a block path has at least two points'), label: DiagramPoint.optional() }))
    .default({}),
  signals: z.record(ItemId, z.object({ at: DiagramPoint, facing: DiagramFacing })).default({}),
  turnouts: z.record(ItemId, z.object({ at: DiagramPoint })).default({}),
  labels: z
    .array(z.object({ text: z.string().trim().min(1).max(80), at: DiagramPoint, size: z.enum(['small', 'large']).optional() }))
    .default([]),
})

/**
 * Which train a decoder address stands for. RailCom-capable detectors (NMRA S-9.3.2) report the address of
 * the locomotive decoder in their block; Blockbell then writes this description into the block's berth.
 * DCC addresses run 1-10239 (short 1-127, long up to 10239: NMRA S-9.2.1, from memory).
 */
export const DecoderEntry = z.object({
  address: z.number({ error: 'address is a number' }).int('address is a whole number').min(1, 'a decoder address is 1 to 10239').max(10239, 'a decoder address is 1 to 10239'),
  description: z.string().trim().min(1, 'description is required').max(16, 'a description is at most 16 characters')
    .regex(/^[A-Z0-9](?:[A-Z0-9 -]*[A-Z0-9])?$/, 'a description is capital letters, digits, inner spaces and hyphens, e.g. 1F42'),
})

const EMPTY_DIAGRAM = { width: 1280, height: 800, blocks: {}, signals: {}, turnouts: {}, labels: [] }

export const LayoutDefinition = z.object({
  schema: z.literal(1, 'schema must be 1'),
  name: Name,
  scale: Scale,
  blocks: z.array(Block).min(1, 'a layout has at least one block'),
  links: z.array(Link),
  turnouts: z.array(Turnout).default([]),
  signals: z.array(Signal).default([]),
  areas: z.array(Area).default([]),
  /** Decoder address -> train description, for detectors that report addresses. */
  decoders: z.array(DecoderEntry).max(10239).default([]),
  diagram: Diagram.default(() => structuredClone(EMPTY_DIAGRAM)),
})

/** A layout definition as validated (defaults filled in). */
export type Layout = z.output<typeof LayoutDefinition>
/** A layout definition as written (optional parts may be missing). */
export type LayoutInput = z.input<typeof LayoutDefinition>
export type LayoutBlock = z.output<typeof Block>
export type LayoutLink = z.output<typeof Link>
export type LayoutTurnout = z.output<typeof Turnout>
export type LayoutSignal = z.output<typeof Signal>
export type LayoutArea = z.output<typeof Area>
export type LayoutDecoder = z.output<typeof DecoderEntry>
export type LayoutDiagram = z.output<typeof Diagram>
export type SignalKindName = z.output<typeof SignalKind>
export type EndOfLineReading = z.output<typeof EndOfLine>
export type DiagramFacingName = z.output<typeof DiagramFacing>
export type Point = z.output<typeof DiagramPoint>
