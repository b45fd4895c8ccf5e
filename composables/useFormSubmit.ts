/**
 * The state every Blockbell form shares: `busy` while a request runs, `error` (field by field) when it fails,
 * and `ready` once the page is interactive (forms keep their button disabled until then: see useHydrated).
 * `run(action)` clears the error, runs the action and records a failure; it resolves true on success.
 */
export function useFormSubmit() {
  const busy = ref(false)
  const error = ref<ApiErrorView | null>(null)
  const hydrated = useHydrated()
  const ready = computed(() => hydrated.value && !busy.value)

  async function run(action: () => Promise<unknown>): Promise<boolean> {
    busy.value = true
    error.value = null
    try {
      await action()
      return true
    } catch (e) {
      error.value = toApiError(e)
      return false
    } finally {
      busy.value = false
    }
  }

  return { busy: readonly(busy), error: readonly(error), ready, run }
}
