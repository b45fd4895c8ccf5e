const KEY = 'blockbell-alarm-muted'
const REPEAT_MS = 2500

/**
 * A two-tone beep made with the Web Audio API, repeated while `active` is true and sound is not muted.
 * Browsers allow sound only after the user has touched the page, so `blocked` says when a tap is needed.
 */
export function useAlarmSound(active: Ref<boolean>) {
  const muted = useState('alarm-muted', () => false)
  const blocked = ref(false)
  let ctx: AudioContext | null = null
  let timer: ReturnType<typeof setInterval> | null = null

  function context(): AudioContext | null {
    if (ctx) return ctx
    const Ctor = window.AudioContext ?? (window as unknown as { webkitAudioContext?: typeof AudioContext }).webkitAudioContext
    ctx = Ctor ? new Ctor() : null
    return ctx
  }

  function tone(c: AudioContext, frequency: number, start: number) {
    const osc = c.createOscillator()
    const gain = c.createGain()
    osc.type = 'square'
    osc.frequency.value = frequency
    gain.gain.setValueAtTime(0.0001, start)
    gain.gain.exponentialRampToValueAtTime(0.15, start + 0.02)
    gain.gain.exponentialRampToValueAtTime(0.0001, start + 0.25)
    osc.connect(gain).connect(c.destination)
    osc.start(start)
    osc.stop(start + 0.3)
  }

  function beep() {
    const c = context()
    if (!c) return
    if (c.state === 'suspended') void c.resume().catch(() => {})
    blocked.value = c.state !== 'running'
    if (blocked.value) return
    tone(c, 880, c.currentTime)
    tone(c, 660, c.currentTime + 0.32)
  }

  function unlock() {
    const c = context()
    if (c && c.state === 'suspended') void c.resume().then(() => { blocked.value = false }).catch(() => {})
  }

  function update() {
    const on = active.value && !muted.value
    if (on && !timer) {
      beep()
      timer = setInterval(beep, REPEAT_MS)
    } else if (!on && timer) {
      clearInterval(timer)
      timer = null
    }
  }

  function toggleMute() {
    muted.value = !muted.value
    localStorage.setItem(KEY, muted.value ? '1' : '0')
  }

  onMounted(() => {
    muted.value = localStorage.getItem(KEY) === '1'
    window.addEventListener('pointerdown', unlock)
    window.addEventListener('keydown', unlock)
    watch([active, muted], update, { immediate: true })
  })
  onBeforeUnmount(() => {
    if (timer) clearInterval(timer)
    window.removeEventListener('pointerdown', unlock)
    window.removeEventListener('keydown', unlock)
    void ctx?.close().catch(() => {})
  })

  return { muted: readonly(muted), blocked: readonly(blocked), toggleMute }
}
