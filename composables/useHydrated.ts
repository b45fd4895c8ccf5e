/**
 * False until the page is interactive in the browser. Forms keep their submit button disabled until then,
 * so an early tap cannot send a native GET that puts the fields (a password) into the address bar.
 */
export function useHydrated() {
  const hydrated = ref(false)
  onMounted(() => { hydrated.value = true })
  return readonly(hydrated)
}
