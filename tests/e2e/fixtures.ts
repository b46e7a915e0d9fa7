import { test as base, expect } from '@playwright/test'

export const test = base.extend({
  // The base URL is only known once global set-up has started (or found) the server.
  baseURL: async ({}, use) => { await use(process.env.BASE_URL) },
})
export { expect }

export const uniqueEmail = (label: string) => `${label}-${Math.random().toString(36).slice(2, 10)}@e2e.counterpoise.example`
