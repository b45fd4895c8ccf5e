/** Longest train description the panel accepts (the engine's and the protocol's limit). */
export const DESCRIPTION_MAX = 16

const PATTERN = /^[A-Z0-9](?:[A-Z0-9 -]*[A-Z0-9])?$/

export type DescriptionCheck = { ok: true, value: string } | { ok: false, message: string }

/**
 * Checks what a person typed as a train description: headcode-like text (letters, digits, inner spaces
 * and hyphens), at most 16 characters, written in capitals. Empty means "no description".
 */
export function checkDescription(input: string): DescriptionCheck {
  const value = input.trim().replace(/\s+/g, ' ').toUpperCase()
  if (value === '') return { ok: true, value }
  if (value.length > DESCRIPTION_MAX) return { ok: false, message: `A description is at most ${DESCRIPTION_MAX} characters.` }
  if (!PATTERN.test(value)) return { ok: false, message: 'Use letters, digits, spaces and hyphens only, such as 1F42.' }
  return { ok: true, value }
}
