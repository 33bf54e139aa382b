// Tiepoint design tokens: a neutral slate base, one brand colour of our own
// (a deep teal we call "tide"), and a separate colour-blind-safe scale for test
// results (blue = pass, amber = watch, vermilion = fail; Okabe–Ito hues),
// always paired with a word or icon in the UI. The values live in
// shared/palette.ts, which the map and the histogram read too.
import type { Config } from 'tailwindcss'
import { TIDE, VERDICT } from './shared/palette'

export default {
  content: ['./components/**/*.vue', './pages/**/*.vue', './layouts/**/*.vue', './app.vue', './error.vue', './composables/**/*.ts'],
  theme: {
    extend: {
      fontFamily: {
        sans: ['"IBM Plex Sans"', 'system-ui', 'sans-serif'],
      },
      colors: {
        tide: { ...TIDE },
        verdict: {
          pass: VERDICT.pass, 'pass-bg': VERDICT.passBg,
          watch: VERDICT.watch, 'watch-bg': VERDICT.watchBg,
          fail: VERDICT.fail, 'fail-bg': VERDICT.failBg,
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
