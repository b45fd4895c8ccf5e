/** Epoch milliseconds, updated every `everyMs` in the browser (for clocks and "recent" marks). */
export function useNow(everyMs = 1000) {
  const now = ref(Date.now())
  let timer: ReturnType<typeof setInterval> | null = null
  onMounted(() => {
    now.value = Date.now()
    timer = setInterval(() => { now.value = Date.now() }, everyMs)
  })
  onBeforeUnmount(() => { if (timer) clearInterval(timer) })
  return readonly(now)
}
