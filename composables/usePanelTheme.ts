const KEY = 'blockbell-theme'

/**
 * Dark by default; light on request. The choice is the `light` class on <html>, remembered in localStorage.
 */
export function usePanelTheme() {
  const light = useState('panel-theme-light', () => false)

  function apply() {
    document.documentElement.classList.toggle('light', light.value)
  }

  onMounted(() => {
    light.value = localStorage.getItem(KEY) === 'light'
    apply()
  })

  function toggle() {
    light.value = !light.value
    localStorage.setItem(KEY, light.value ? 'light' : 'dark')
    apply()
  }

  return { light: readonly(light), toggle }
}
