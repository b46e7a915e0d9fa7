import { createRequire } from 'node:module'
import { dirname, join } from 'node:path'
import { linkNitroSelfReferences } from './scripts/lib/nitroSelfLinks'

/** The two Nunito files the minutes PDF embeds, shipped inside the server build (server/utils/minutesPdf.ts). */
const nunitoFiles = join(dirname(createRequire(import.meta.url).resolve('@fontsource/nunito/package.json')), 'files')

// https://nuxt.com/docs/api/configuration/nuxt-config
export default defineNuxtConfig({
  modules: ['@nuxtjs/tailwindcss', '@pinia/nuxt', '@vueuse/nuxt', 'nuxt-auth-utils', '@nuxt/eslint', 'nuxt-security'],
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
  // Links prefetch the next page only when touched or focused, not whenever they scroll into view:
  // a stakeholder's phone should not download the facilitator's pages it links back to.
  experimental: { defaults: { nuxtLink: { prefetchOn: { visibility: false, interaction: true } } } },
  compatibilityDate: '2026-11-01',
  nitro: {
    experimental: { websocket: true },
    // Node ≥ 20.19 resolves the "module-sync" export condition (used by some of exceljs's small
    // dependencies); without it the file tracer leaves those files out of .output.
    exportConditions: ['module-sync'],
    serverAssets: [{ baseName: 'nunito', dir: nunitoFiles, pattern: 'nunito-latin-{400,700}-normal.woff' }],
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
  // Security headers and request limits (nuxt-security). Every page runs under a strict content
  // security policy: scripts only with the per-response nonce (and what they load), no inline
  // event handlers, no plugins, no framing; styles may be inline (Vue style bindings, charts).
  // tests/e2e fail on any CSP violation a page reports (tests/e2e/fixtures.ts).
  security: {
    headers: {
      contentSecurityPolicy: {
        'default-src': ['\'self\''],
        'base-uri': ['\'none\''],
        'connect-src': ['\'self\''],
        'font-src': ['\'self\'', 'data:'],
        'form-action': ['\'self\''],
        'frame-ancestors': ['\'none\''],
        'img-src': ['\'self\'', 'data:', 'blob:'],
        'object-src': ['\'none\''],
        'script-src': ['\'self\'', '\'strict-dynamic\'', '\'nonce-{{nonce}}\''],
        'script-src-attr': ['\'none\''],
        'style-src': ['\'self\'', '\'unsafe-inline\''],
        'worker-src': ['\'self\'', 'blob:'],
        // Served over plain HTTP on loopback in development and tests; behind TLS, the proxy's
        // HSTS does this job.
        'upgrade-insecure-requests': false,
      },
      // Not cross-origin isolated: nothing needs it, and under COEP Chrome refuses to start a
      // dedicated worker (the acceptability analysis) whose script is served without COEP.
      crossOriginEmbedderPolicy: 'unsafe-none',
      referrerPolicy: 'same-origin',
      xFrameOptions: 'DENY',
      permissionsPolicy: { 'camera': [], 'display-capture': [], 'fullscreen': ['self'], 'geolocation': [], 'microphone': [] },
    },
    // JSON bodies up to 4 MB (a large ledger); files up to 25 MB, above the routes' own limits
    // (5 MB ledger uploads, 20 MB minutes checks), so those routes answer with their own words.
    requestSizeLimiter: { maxRequestSizeInBytes: 4_000_000, maxUploadFileRequestInBytes: 25_000_000 },
    // Limits that know who is asking live in the routes (sign-in, join codes, socket events); a
    // per-address limiter would lock out a whole meeting behind one NAT.
    rateLimiter: false,
    // Names and rationales may contain "<" and "&": they are stored as typed and always rendered
    // as text (tests/e2e check it), so a validator refusing them would only get in the way.
    xssValidator: false,
    corsHandler: false,
    removeLoggers: false,
  },
  tailwindcss: {
    cssPath: false,
    viewer: false,
  },
})
