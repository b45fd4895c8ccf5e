/**
 * Blockbell signalling engine: pure functions over a layout definition and its live state.
 * No I/O, no timers, no clock: every time comes from the events.
 */
export { validateLayout } from './validate'
export { initialState, applyEvent, createEngine, MAX_DESCRIPTION_LENGTH } from './engine'
export type { Engine } from './engine'
export { computeIndications } from './aspects'
export { turnoutLock, turnoutLocks, turnoutsTouchedBy, lockOf } from './locking'
export type { TurnoutLock, LockInputs } from './locking'
export { scaleSpeed, SCALES, METRES_PER_MILE } from './scale'
export { SIGNAL_KINDS, END_OF_LINE, TURNOUT_LEGS, TURNOUT_POSITIONS, OVERRIDE_MODES, ASPECTS } from './values'
export type { ScaleEntry, ScaleSpeedInput } from './scale'
export type * from './types'
