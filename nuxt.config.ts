import { linkNitroSelfReferences } from './scripts/lib/nitroSelfLinks'

// https://nuxt.com/docs/api/configuration/nuxt-config
export default defineNuxtConfig({
  modules: ['@nuxtjs/tailwindcss', '@pinia/nuxt', '@vueuse/nuxt', 'nuxt-auth-utils', '@nuxt/eslint'],
  devtools: { enabled: false },
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
  css: [
    '@fontsource/nunito/400.css',
    '@fontsource/nunito/600.css',
    '@fontsource/nunito/700.css',
    '@fontsource/nunito/800.css',
    '~/assets/css/main.css',
  ],
  runtimeConfig: {
    // Overridden at run time by NUXT_DATABASE_URL / DATABASE_URL (see server/utils/db.ts).
    databaseUrl: '',
    session: {
      name: 'counterpoise-session',
      maxAge: 60 * 60 * 12,
    },
  },
  compatibilityDate: '2026-11-01',
  nitro: {
    experimental: { websocket: true },
    // Node ≥ 20.19 resolves the "module-sync" export condition (used by some of exceljs's small
    // dependencies); without it the file tracer leaves those files out of .output.
    exportConditions: ['module-sync'],
    hooks: {
      // pdfkit brings @noble/hashes 1.x and pkijs 2.x; see scripts/lib/nitroSelfLinks.ts.
      compiled(nitro) {
        linkNitroSelfReferences(nitro.options.output.serverDir)
      },
    },
  },
  typescript: {
    strict: true,
    typeCheck: false,
  },
  telemetry: false,
  eslint: {
    config: { stylistic: true },
  },
  tailwindcss: {
    cssPath: false,
    viewer: false,
  },
})
