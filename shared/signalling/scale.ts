/** Common model railway scales with their ratios (1:N) and where each ratio is defined. */
export interface ScaleEntry {
  name: string
  ratio: number
  basis: string
  source: string
}

export const SCALES: readonly ScaleEntry[] = Object.freeze([
  { name: 'OO', ratio: 76.2, basis: '4 mm to the foot (304.8 / 4)', source: 'British 4 mm scale, common practice' },
  { name: 'HO', ratio: 87.1, basis: '3.5 mm to the foot (304.8 / 3.5 = 87.09)', source: 'NMRA Standard S-1.2' },
  { name: 'N', ratio: 160, basis: '1:160', source: 'NMRA Standard S-1.2' },
  { name: 'N (UK)', ratio: 148, basis: '2.0625 mm to the foot (about 1:148)', source: 'British N gauge, common practice' },
  { name: 'TT', ratio: 120, basis: '1:120', source: 'NMRA Standard S-1.2' },
  { name: 'S', ratio: 64, basis: '3/16 inch to the foot (1:64)', source: 'NMRA Standard S-1.2' },
  { name: 'O (North America)', ratio: 48, basis: '1/4 inch to the foot (1:48)', source: 'NMRA Standard S-1.2' },
  { name: 'Z', ratio: 220, basis: '1:220', source: 'common practice' },
].map(s => Object.freeze(s)))

/** Metres in one statute mile (international yard and pound, exact). */
export const METRES_PER_MILE = 1609.344

export interface ScaleSpeedInput {
  /** Distance run on the model, in millimetres. */
  lengthMm: number
  /** Real time taken, in seconds (never fast-clock time). */
  seconds: number
  /** Scale ratio 1:N. */
  ratio: number
}

/**
 * Scale speed: the speed the full-size train would have, = model distance / real time x scale ratio.
 * Throws a RangeError unless length, time and ratio are positive finite numbers.
 */
export function scaleSpeed({ lengthMm, seconds, ratio }: ScaleSpeedInput): { kmh: number, mph: number } {
  for (const [name, v] of [['lengthMm', lengthMm], ['seconds', seconds], ['ratio', ratio]] as const) {
    if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) throw new RangeError(`scaleSpeed: ${name} must be a positive number`)
  }
  const metresPerSecond = (lengthMm / 1000 / seconds) * ratio
  const kmh = metresPerSecond * 3.6
  return { kmh, mph: (metresPerSecond * 3600) / METRES_PER_MILE }
}
