// Tiepoint design tokens: a neutral slate base, one brand colour of our own
// (a deep teal we call "tide"), and a separate colour-blind-safe scale for test
// results (blue = pass, amber = watch, vermilion = fail; Okabe–Ito hues),
// always paired with a word or icon in the UI.
import type { Config } from 'tailwindcss'

export default {
  content: ['./components/**/*.vue', './pages/**/*.vue', './layouts/**/*.vue', './app.vue', './error.vue', './composables/**/*.ts'],
  theme: {
    extend: {
      fontFamily: {
        sans: ['"IBM Plex Sans"', 'system-ui', 'sans-serif'],
      },
      colors: {
        tide: {
          50: '#effaf9', 100: '#d6f1ee', 200: '#aee2dd', 300: '#7ccbc5', 400: '#4aaea9',
          500: '#2f918d', 600: '#237473', 700: '#1f5d5d', 800: '#1c4b4c', 900: '#193f40',
        },
        verdict: {
          pass: '#0072B2', 'pass-bg': '#e6f1f8',
          watch: '#B07A00', 'watch-bg': '#fdf3dc',
          fail: '#D55E00', 'fail-bg': '#fbebe0',
        },
      },
      fontSize: {
        xs: ['0.75rem', '1rem'], sm: ['0.875rem', '1.25rem'], base: ['0.9375rem', '1.5rem'],
        lg: ['1.125rem', '1.625rem'], xl: ['1.375rem', '1.875rem'], '2xl': ['1.75rem', '2.25rem'],
      },
    },
  },
  plugins: [],
} satisfies Config
