/** The page in full screen (Fullscreen API), for a tablet at the layout; `supported` is false where it is not offered. */
export function useFullScreen() {
  const supported = ref(false)
  const active = ref(false)
  const sync = () => { active.value = !!document.fullscreenElement }
  onMounted(() => {
    supported.value = !!document.documentElement.requestFullscreen && document.fullscreenEnabled !== false
    sync()
    document.addEventListener('fullscreenchange', sync)
  })
  onBeforeUnmount(() => document.removeEventListener('fullscreenchange', sync))
  async function toggle() {
    try {
      if (document.fullscreenElement) await document.exitFullscreen()
      else await document.documentElement.requestFullscreen()
    } catch { /* refused by the browser (no user gesture, or not allowed here): stay as we are */ }
    sync()
  }
  return { supported: readonly(supported), active: readonly(active), toggle }
}
