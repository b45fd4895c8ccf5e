import type { Config } from 'tailwindcss'

// Blockbell's own palette: "night" greys with a green cast for dim layout rooms, "brass" for actions and
// focus, and plain status colours that always travel with a word or a shape (never colour alone).
export default {
  darkMode: 'class',
  content: [],
  theme: {
    extend: {
      fontFamily: { sans: ['Barlow', 'ui-sans-serif', 'system-ui', 'sans-serif'] },
      colors: {
        night: {
          50: '#eef3f1', 100: '#d5dfdb', 200: '#aebfb8', 300: '#869c94', 400: '#627870',
          500: '#4a5d56', 600: '#374842', 700: '#273631', 800: '#1a2623', 900: '#121b19', 950: '#0b1110',
        },
        brass: { 300: '#f0cf84', 400: '#e6b655', 500: '#d49b2f', 600: '#b07c1f', 700: '#8a5f18' },
        ok: { 400: '#5fcf8f', 500: '#37b36f' },
        warn: { 400: '#f2c14e', 500: '#e0a82a' },
        alarm: { 400: '#ff6f61', 500: '#e5483a', 600: '#c1352a' },
      },
      minHeight: { touch: '44px' },
      minWidth: { touch: '44px' },
    },
  },
} satisfies Config
