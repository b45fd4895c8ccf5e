import escapeHtml from 'escape-html'

const RAW = Symbol('raw html')

/** Markup that is already safe (built by `html`), inserted as it is. */
export interface SafeHtml { readonly [RAW]: string }

function isSafe(value: unknown): value is SafeHtml {
  return typeof value === 'object' && value !== null && RAW in value
}

function piece(value: unknown): string {
  if (isSafe(value)) return value[RAW]
  if (Array.isArray(value)) return value.map(piece).join('')
  if (value === null || value === undefined || value === false) return ''
  return escapeHtml(String(value))
}

/**
 * Tagged template for e-mail markup: every interpolated value is escaped unless it was itself built by
 * `html`, so what people typed (names, layout names) can never add markup to a message.
 */
export function html(strings: TemplateStringsArray, ...values: unknown[]): SafeHtml {
  let out = strings[0]!
  values.forEach((value, i) => { out += piece(value) + strings[i + 1]! })
  return { [RAW]: out }
}

export function renderHtml(value: SafeHtml): string {
  return value[RAW]
}
