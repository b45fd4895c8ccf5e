// wcag-contrast 3.0.0 ships no types; the one function the contrast test uses as its outside reference.
declare module 'wcag-contrast' {
  /** WCAG contrast ratio of two hex colours. */
  export function hex(a: string, b: string): number
}
