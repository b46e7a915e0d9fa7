import { test as base, expect } from '@playwright/test'

export const test = base.extend<{ cspGuard: string[] }>({
  // The base URL is only known once global set-up has started (or found) the server.
  baseURL: async ({}, use) => { await use(process.env.BASE_URL) },
  // Every page of every test runs under the app's content security policy: a violation the
  // browser reports (a blocked script, style, connection or worker) fails the test.
  cspGuard: [async ({ page }, use) => {
    const violations: string[] = []
    page.on('console', (message) => {
      if (/Content Security Policy|Refused to (load|execute|apply|connect|create|frame)/i.test(message.text())) violations.push(message.text())
    })
    await use(violations)
    expect(violations, 'content security policy violations reported by the page').toEqual([])
  }, { auto: true }],
})
export { expect }

export const uniqueEmail = (label: string) => `${label}-${Math.random().toString(36).slice(2, 10)}@e2e.counterpoise.example`
