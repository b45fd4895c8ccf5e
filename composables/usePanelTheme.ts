import { THEME_KEY as KEY } from '#shared/theme/boot'

/**
 * Dark by default; light on request, for the whole app. The choice is the `light` class on <html>,
 * remembered in localStorage (a script in the page head applies it before the first paint).
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
