// Tiepoint — Nuxt configuration. Source folders sit at the top level (srcDir '.').
export default defineNuxtConfig({
  compatibilityDate: '2026-01-01',
  srcDir: '.',
  serverDir: 'server',
  buildDir: process.env.NUXT_BUILD_DIR || '.nuxt',
  devtools: { enabled: false },
  telemetry: false,
  modules: ['@pinia/nuxt', '@nuxtjs/tailwindcss', '@sidebase/nuxt-auth'],
  css: [
    '@fontsource/ibm-plex-sans/300.css',
    '@fontsource/ibm-plex-sans/400.css',
    '@fontsource/ibm-plex-sans/500.css',
    '@fontsource/ibm-plex-sans/600.css',
    'leaflet/dist/leaflet.css',
    '~/assets/css/main.css',
  ],
  // Strict everywhere, but without noUncheckedIndexedAccess: the engine's hot
  // loops index Float64Arrays by computed offsets, where `!` on every read
  // would hide real mistakes among thousands of harmless ones.
  typescript: {
    strict: true,
    tsConfig: { compilerOptions: { noUncheckedIndexedAccess: false } },
    sharedTsConfig: { compilerOptions: { noUncheckedIndexedAccess: false } },
    nodeTsConfig: { compilerOptions: { noUncheckedIndexedAccess: false } },
  },
  app: {
    head: {
      title: 'Tiepoint',
      htmlAttrs: { lang: 'en' },
      meta: [{ name: 'viewport', content: 'width=device-width, initial-scale=1' }],
      link: [{ rel: 'icon', type: 'image/svg+xml', href: '/favicon.svg' }],
    },
  },
  auth: {
    baseURL: '/api/auth',
    originEnvKey: 'AUTH_ORIGIN',
    provider: { type: 'authjs', defaultProvider: 'credentials', addDefaultCallbackUrl: false },
    globalAppMiddleware: false,
    sessionRefresh: { enablePeriodically: false, enableOnWindowFocus: false },
  },
  runtimeConfig: {
    authSecret: '',
    publicUrl: '',
  },
  tailwindcss: { cssPath: false, viewer: false },
  // A hydration mismatch names the element in the console even in the built
  // app, so the browser test that fails on console errors says what broke.
  vite: { define: { __VUE_PROD_HYDRATION_MISMATCH_DETAILS__: 'true' } },
  nitro: {
    typescript: { tsConfig: { compilerOptions: { noUncheckedIndexedAccess: false } } },
    output: { dir: process.env.NUXT_OUTPUT_DIR || '.output' },
    externals: { external: ['pdfkit', 'pg-boss', 'smtp-server', 'nodemailer', 'mailparser'] },
  },
})
