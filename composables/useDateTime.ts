const OPTIONS: Intl.DateTimeFormatOptions = { dateStyle: 'medium', timeStyle: 'short', hourCycle: 'h23' }
const UTC = new Intl.DateTimeFormat('en-GB', { ...OPTIONS, timeZone: 'UTC' })

/**
 * Formats a date and time in the browser's locale and time zone. The server's render (and the hydration that
 * follows it) uses UTC, which both sides agree on; the local form replaces it once the page is interactive.
 */
export function useDateTime() {
  const hydrated = useHydrated()
  return (iso: string) => {
    const at = new Date(iso)
    return hydrated.value ? at.toLocaleString(undefined, OPTIONS) : `${UTC.format(at)} UTC`
  }
}
