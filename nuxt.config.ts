// https://nuxt.com/docs/api/configuration/nuxt-config
export default defineNuxtConfig({
  compatibilityDate: '2026-11-01',
  devtools: { enabled: false },
  telemetry: false,
  modules: ['@nuxtjs/tailwindcss', '@pinia/nuxt', '@vueuse/nuxt', 'nuxt-auth-utils', '@nuxt/eslint'],
  css: [
    '@fontsource/nunito/400.css',
    '@fontsource/nunito/600.css',
    '@fontsource/nunito/700.css',
    '@fontsource/nunito/800.css',
    '~/assets/css/main.css',
  ],
  app: {
    head: {
      htmlAttrs: { lang: 'en' },
      title: 'Counterpoise',
      titleTemplate: '%s · Counterpoise',
      meta: [
        { name: 'viewport', content: 'width=device-width, initial-scale=1, viewport-fit=cover' },
        { name: 'description', content: 'Group decisions with conflicting objectives: weigh, narrow, decide, sign the minutes.' },
        { name: 'theme-color', content: '#12393a' },
      ],
      link: [{ rel: 'icon', type: 'image/svg+xml', href: '/favicon.svg' }],
    },
  },
  runtimeConfig: {
    // Overridden at run time by NUXT_DATABASE_URL / DATABASE_URL (see server/utils/db.ts).
    databaseUrl: '',
    session: {
      name: 'counterpoise-session',
      maxAge: 60 * 60 * 12,
    },
  },
  typescript: {
    strict: true,
    typeCheck: false,
  },
  tailwindcss: {
    cssPath: false,
    viewer: false,
  },
  eslint: {
    config: { stylistic: true },
  },
  nitro: {
    experimental: { websocket: true },
  },
})
