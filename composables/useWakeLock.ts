/**
 * Keeps the screen awake while the calling component is shown (Screen Wake Lock API). The browser drops the
 * lock when the page is hidden; it is asked for again when the page is visible again, and let go on unmount.
 * Where the API is missing or refused, the screen simply follows the device's own settings.
 */
export function useWakeLock() {
  const held = ref(false)
  let sentinel: WakeLockSentinel | null = null
  let wanted = false

  async function request() {
    if (!wanted || sentinel || document.visibilityState !== 'visible' || !('wakeLock' in navigator)) return
    try {
      sentinel = await navigator.wakeLock.request('screen')
      held.value = true
      sentinel.addEventListener('release', () => {
        sentinel = null
        held.value = false
      })
      if (!wanted) await release()
    } catch { held.value = false }
  }
  async function release() {
    const s = sentinel
    sentinel = null
    held.value = false
    await s?.release().catch(() => {})
  }
  const onVisibility = () => { if (document.visibilityState === 'visible') request() }

  onMounted(() => {
    wanted = true
    document.addEventListener('visibilitychange', onVisibility)
    request()
  })
  onBeforeUnmount(() => {
    wanted = false
    document.removeEventListener('visibilitychange', onVisibility)
    release()
  })
  return { held: readonly(held) }
}
