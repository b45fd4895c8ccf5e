/** Where the theme choice is kept in the browser. */
export const THEME_KEY = 'blockbell-theme'

/** Applies a remembered light theme before the app starts (inlined in the page head). */
export const THEME_BOOT_SCRIPT = `try{if(localStorage.getItem('${THEME_KEY}')==='light')document.documentElement.classList.add('light')}catch(e){}`
