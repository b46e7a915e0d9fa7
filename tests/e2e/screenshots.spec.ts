import { mkdirSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { request as playwrightRequest, type Page } from '@playwright/test'
import { signPdf } from '../../server/utils/pdfSigning'
import { sampleMinutesPdf } from '../fixtures/minutes/sampleMinutes'
import { KELDERWICK_ALTERNATIVES, KELDERWICK_CRITERIA } from '../fixtures/uploads/kelderwick'
import { testDb } from '../support/db'
import { expect, test, uniqueEmail } from './fixtures'

/**
 * The README's pictures, taken from the real product in Chromium on every `npm test` run, so the
 * README always shows what the code does today. Each picture has a fixed name under
 * docs/screenshots/ and is taken once per run: the desktop ones in the desktop project, the phone
 * one in the phone project. The data is the invented Kelderwick demo.
 */
const DIR = fileURLToPath(new URL('../../docs/screenshots/', import.meta.url))
const shot = (name: string) => {
  mkdirSync(DIR, { recursive: true })
  return `${DIR}${name}`
}
const DEMO_PASSWORD = 'kelderwick-demo'

async function signIn(page: Page, email: string, password = DEMO_PASSWORD) {
  await page.context().clearCookies()
  const answer = await page.request.post('/api/auth/sign-in', { data: { email, password } })
  expect(answer.ok(), `sign in as ${email}`).toBe(true)
}

/** The demo room's id, as the demo facilitator sees it in My rooms. */
async function demoRoomId(page: Page) {
  await signIn(page, 'facilitator@demo.counterpoise.example')
  const rooms = await (await page.request.get('/api/rooms')).json() as { id: string, title: string }[]
  const demo = rooms.find(r => r.title === 'Kelderwick sea-front defences')
  expect(demo, 'the demo room is loaded').toBeTruthy()
  return demo!.id
}

/** Animations and the blinking caret would make pictures differ from run to run. */
const still = { animations: 'disabled', caret: 'hide' } as const

test.describe('desktop pictures', () => {
  test.beforeEach(({}, testInfo) => {
    test.skip(testInfo.project.name !== 'desktop', 'taken once, at desktop size')
  })

  test('the facilitator\'s option table', async ({ page }) => {
    await page.setViewportSize({ width: 1280, height: 900 })
    const id = await demoRoomId(page)
    await page.goto(`/rooms/${id}`)
    await expect(page.getByTestId('ledger-table')).toBeVisible()
    await expect(page.getByTestId('front-chart').locator('svg.apexcharts-svg')).toBeVisible()
    await page.waitForLoadState('networkidle')
    const table = page.getByTestId('ledger-table')
    await table.scrollIntoViewIfNeeded()
    await page.screenshot({ path: shot('option-table.png'), fullPage: true, ...still })
  })

  test('the gallery on a big screen, dark theme', async ({ page }) => {
    // A 1080p projector.
    await page.setViewportSize({ width: 1920, height: 1080 })
    const id = await demoRoomId(page)
    await page.goto(`/rooms/${id}/gallery`)
    await expect(page.locator('[data-theme="dark"]')).toBeVisible()
    await page.waitForLoadState('networkidle')
    await page.screenshot({ path: shot('gallery-dark.png'), ...still })
  })

  test('check minutes, with signed minutes dropped on it', async ({ page }) => {
    test.skip(!process.env.COUNTERPOISE_SIGNING_P12, 'npm test gives the tests the signing key')
    await page.setViewportSize({ width: 1280, height: 900 })
    const minutes = await signPdf(await sampleMinutesPdf('Minutes of the Kelderwick sea-front room'), {
      signerName: 'Jem Carrow', reason: 'Minutes of the Kelderwick sea-front room', location: 'Kelderwick town hall', contactInfo: 'secretary@demo.counterpoise.example',
    })
    await page.goto('/check-minutes')
    await expect(page.getByTestId('check-input')).toBeEnabled()
    await page.getByTestId('check-input').setInputFiles({ name: 'kelderwick-minutes.pdf', mimeType: 'application/pdf', buffer: minutes })
    await expect(page.getByTestId('verdict-title')).toHaveText('Valid signature')
    await page.screenshot({ path: shot('check-minutes.png'), fullPage: true, ...still })
  })
})

test('the stakeholder\'s weighing page on a 360 px phone', async ({ page, baseURL }, testInfo) => {
  test.skip(testInfo.project.name !== 'phone', 'taken once, on the phone')
  await page.setViewportSize({ width: 360, height: 740 })
  // A room of its own with the Kelderwick ledger and an open weighing (the demo room stays as loaded).
  const facilitator = await playwrightRequest.newContext({ baseURL, extraHTTPHeaders: { connection: 'close' } })
  expect((await facilitator.post('/api/auth/sign-up', { data: { displayName: 'Morwenna Tallis', email: uniqueEmail('shots-facilitator'), password: 'a-long-enough-password' } })).status()).toBe(201)
  const room = await facilitator.post('/api/rooms', { data: { title: 'Kelderwick sea-front defences', question: 'Which sea-front defence scheme should Kelderwick build?' } })
  const { id: roomId } = await room.json()
  const criteria = KELDERWICK_CRITERIA.map(c => ({ ...c, precision: c.id === 'cost' ? 2 : c.id === 'amenity' ? 1 : 0 }))
  const alternatives = KELDERWICK_ALTERNATIVES.map((a, i) => ({ id: `a${i + 1}`, ...a }))
  expect((await facilitator.put(`/api/rooms/${roomId}/ledger`, { data: { baseVersion: 0, criteria, alternatives } })).status()).toBe(201)
  const signUp = await page.request.post('/api/auth/sign-up', { data: { displayName: 'Idris Penhale', email: uniqueEmail('shots-stakeholder'), password: 'a-long-enough-password' } })
  expect(signUp.status()).toBe(201)
  await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, (await signUp.json()).id, 'stakeholder'])
  expect((await facilitator.post(`/api/rooms/${roomId}/weighings`, { data: { inputStyle: 'sliders' } })).status()).toBe(201)
  await facilitator.dispose()

  await page.goto(`/rooms/${roomId}/balance`)
  await expect(page.getByRole('slider').first()).toBeVisible()
  await page.waitForLoadState('networkidle')
  // The first screen, as the phone shows it (a full-page picture would put the fixed submit bar mid-page).
  await page.screenshot({ path: shot('balance-phone.png'), ...still })
})
