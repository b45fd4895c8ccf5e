/**
 * Contrast of two colours by the WCAG 2.2 definitions: relative luminance of sRGB colours
 * (https://www.w3.org/TR/WCAG22/#dfn-relative-luminance) and contrast ratio (L1 + 0.05) / (L2 + 0.05)
 * (https://www.w3.org/TR/WCAG22/#dfn-contrast-ratio).
 */

/** '#rgb' or '#rrggbb' as 0-255 channels. */
export function hexChannels(hex: string): [number, number, number] {
  const h = hex.replace(/^#/, '')
  const full = h.length === 3 ? [...h].map(c => c + c).join('') : h
  if (!/^[0-9a-f]{6}$/i.test(full)) throw new Error(`not a hex colour: ${hex}`)
  return [0, 2, 4].map(i => Number.parseInt(full.slice(i, i + 2), 16)) as [number, number, number]
}

export function relativeLuminance(hex: string): number {
  const [r, g, b] = hexChannels(hex).map((c) => {
    const s = c / 255
    return s <= 0.04045 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4
  }) as [number, number, number]
  return 0.2126 * r + 0.7152 * g + 0.0722 * b
}

export function contrastRatio(a: string, b: string): number {
  const [hi, lo] = [relativeLuminance(a), relativeLuminance(b)].sort((x, y) => y - x) as [number, number]
  return (hi + 0.05) / (lo + 0.05)
}

/** `top` drawn at `alpha` over `under`, as the hex colour seen (for translucent fills). */
export function blend(top: string, under: string, alpha: number): string {
  const t = hexChannels(top)
  const u = hexChannels(under)
  return `#${t.map((c, i) => Math.round(c * alpha + u[i]! * (1 - alpha)).toString(16).padStart(2, '0')).join('')}`
}
