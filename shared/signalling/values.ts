/**
 * The value lists of Blockbell's signalling, each spelt once: the zod schemas, the types and the panel's
 * lists all derive from these arrays.
 */
export const SIGNAL_KINDS = ['two-aspect', 'three-aspect', 'four-aspect', 'distant'] as const
export type SignalKindName = typeof SIGNAL_KINDS[number]

export const END_OF_LINE = ['danger-ahead', 'clear-ahead'] as const

/** The legs a turnout can be set to. */
export const TURNOUT_LEGS = ['normal', 'reverse'] as const
export type TurnoutLeg = typeof TURNOUT_LEGS[number]

/** Where a turnout lies: a leg, or unknown (no report yet, or a report between legs). */
export const TURNOUT_POSITIONS = [...TURNOUT_LEGS, 'unknown'] as const
export type TurnoutPosition = typeof TURNOUT_POSITIONS[number]

/** A signal's three positions on the panel: hold (always danger), auto (the line decides), clear. */
export const OVERRIDE_MODES = ['hold', 'auto', 'clear'] as const
export type OverrideMode = typeof OVERRIDE_MODES[number]

/** Most restrictive first. */
export const ASPECTS = ['danger', 'caution', 'preliminary-caution', 'proceed'] as const
export type Aspect = typeof ASPECTS[number]
