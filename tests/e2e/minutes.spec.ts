import { mkdirSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { request as playwrightRequest } from '@playwright/test'
import { analyseLedger } from '../../shared/utils/ledger'
import { KELDERWICK_ALTERNATIVES, KELDERWICK_CRITERIA } from '../fixtures/uploads/kelderwick'
import { testDb } from '../support/db'
import { expect, test, uniqueEmail } from './fixtures'

/**
 * The secretary's minutes page in Chromium: the preview, signing (with its confirmation), sending,
 * and the signed file accepted by the public check page. The weighing, the vote and the decision
 * are written straight into the database (their own specs drive those screens). The preview's
 * first screen is kept as docs/screenshots/minutes.png. Data: the invented Kelderwick demo.
 */
const DIR = fileURLToPath(new URL('../../docs/screenshots/', import.meta.url))
const still = { animations: 'disabled', caret: 'hide' } as const

test('the secretary previews, signs and sends the minutes; the check page accepts the file', async ({ page, baseURL }, testInfo) => {
  test.skip(testInfo.project.name !== 'desktop', 'the secretary works at a desk')
  test.skip(!process.env.COUNTERPOISE_SIGNING_P12, 'npm test gives the server the signing key')
  await page.setViewportSize({ width: 1280, height: 900 })

  const facilitator = await playwrightRequest.newContext({ baseURL, extraHTTPHeaders: { connection: 'close' } })
  const signUp = await facilitator.post('/api/auth/sign-up', { data: { displayName: 'Morwenna Tallis', email: uniqueEmail('minutes-facilitator'), password: 'a-long-enough-password' } })
  expect(signUp.status()).toBe(201)
  const facilitatorId = (await signUp.json()).id
  const { id: roomId } = await (await facilitator.post('/api/rooms', { data: { title: 'Kelderwick sea-front defences', question: 'Which sea-front defence scheme should Kelderwick build?' } })).json()
  const alternatives = KELDERWICK_ALTERNATIVES.map((a, i) => ({ id: `a${i + 1}`, ...a }))
  expect((await facilitator.put(`/api/rooms/${roomId}/ledger`, { data: { baseVersion: 0, criteria: KELDERWICK_CRITERIA, alternatives } })).status()).toBe(201)
  const { rows: [version] } = await testDb().query('select id from ledger_versions where room_id = $1', [roomId])

  const stakeholders: string[] = []
  for (const name of ['Idris Penhale', 'Tamsin Rowe']) {
    const { rows: [user] } = await testDb().query('insert into users (email, display_name, password_hash) values ($1, $2, $3) returning id', [uniqueEmail('minutes-stakeholder'), name, 'not-a-hash'])
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, \'stakeholder\')', [roomId, user.id])
    stakeholders.push(user.id)
  }
  const weighing = await (await facilitator.post(`/api/rooms/${roomId}/weighings`, { data: { inputStyle: 'sliders', showNames: false } })).json()
  const weights = [[0.4, 0.3, 0.1, 0.1, 0.1], [0.1, 0.2, 0.2, 0.1, 0.4]]
  for (const [i, id] of stakeholders.entries()) {
    await testDb().query('insert into submissions (weighing_id, user_id, weights, idempotency_key) values ($1, $2, $3, $4)', [weighing.id, id, JSON.stringify(weights[i]), `e2e-minutes-${i}-key`])
  }
  expect((await facilitator.post(`/api/rooms/${roomId}/weighings/${weighing.id}/close`)).ok()).toBe(true)
  expect((await facilitator.post(`/api/rooms/${roomId}/weighings/${weighing.id}/reveal`)).ok()).toBe(true)
  await facilitator.dispose()

  const efficient = analyseLedger(KELDERWICK_CRITERIA, alternatives).efficientIds
  const { rows: [vote] } = await testDb().query(`insert into votes (room_id, ledger_version_id, shortlist, status, closed_at) values ($1, $2, $3, 'closed', now()) returning id`, [roomId, version.id, JSON.stringify(efficient.slice(0, 3))])
  for (const [i, id] of stakeholders.entries()) {
    const choices = Object.fromEntries(efficient.slice(0, 3).map((alt, k) => [alt, k === 0 ? 'approve' : i === 0 ? 'object' : 'abstain']))
    await testDb().query('insert into ballots (vote_id, user_id, choices, idempotency_key) values ($1, $2, $3, $4)', [vote.id, id, JSON.stringify(choices), `e2e-ballot-${i}-key`])
  }
  await testDb().query(`insert into resolutions (room_id, ledger_version_id, alternative_id, engine_status, rationale, conditions, recorded_by)
    values ($1, $2, $3, 'efficient', $4, $5, $6)`, [roomId, version.id, efficient[0], 'Most homes protected for the money, and both stakeholders approved it.', 'Subject to the coastal survey in spring.', facilitatorId])

  // The secretary, signed in in the browser.
  const secretary = await page.request.post('/api/auth/sign-up', { data: { displayName: 'Jem Carrow', email: uniqueEmail('minutes-secretary'), password: 'a-long-enough-password' } })
  expect(secretary.status()).toBe(201)
  await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, \'secretary\')', [roomId, (await secretary.json()).id])

  await page.goto(`/rooms/${roomId}`)
  await page.getByTestId('open-minutes').click()
  await expect(page).toHaveURL(new RegExp(`/rooms/${roomId}/minutes$`))
  const preview = page.getByTestId('minutes-preview')
  await expect(preview).toBeVisible()
  await expect(page.getByTestId('minutes-decision')).toContainText('Most homes protected for the money')
  await expect(preview).toContainText('2 stakeholders (names withheld)')
  await expect(preview).not.toContainText('Idris Penhale')
  await page.waitForLoadState('networkidle')
  mkdirSync(DIR, { recursive: true })
  await page.screenshot({ path: `${DIR}minutes.png`, ...still })

  const draft = await page.request.get(`/api/rooms/${roomId}/minutes/draft.pdf`)
  expect(draft.headers()['content-type']).toBe('application/pdf')

  // Signing freezes the decision: it asks first, and Cancel signs nothing.
  await page.getByTestId('minutes-sign').click()
  await page.getByTestId('minutes-sign-dialog').getByTestId('confirm-cancel').click()
  await expect(page.getByTestId('minutes-sign-dialog')).toBeHidden()
  await expect(page.getByTestId('minutes-record')).toHaveCount(0)
  await page.getByTestId('minutes-sign').click()
  await page.getByTestId('minutes-sign-dialog').getByTestId('confirm-accept').click()
  await expect(page.getByTestId('minutes-record')).toHaveCount(1)
  const sha256 = (await page.getByTestId('minutes-record-sha256').textContent())!.trim()
  expect(sha256).toMatch(/^[0-9a-f]{64}$/)
  await expect(page.getByTestId('minutes-sign')).toBeDisabled()

  await page.getByTestId('minutes-send').click()
  await page.getByTestId('minutes-send-dialog').getByTestId('confirm-accept').click()
  await expect(page.getByTestId('minutes-notice')).toHaveText('Sent to 4 members.')

  const href = await page.getByTestId('minutes-record').getByRole('link').getAttribute('href')
  const signed = Buffer.from(await (await page.request.get(href!)).body())
  await page.goto('/check-minutes')
  await expect(page.getByTestId('check-input')).toBeEnabled()
  await page.getByTestId('check-input').setInputFiles({ name: 'minutes.pdf', mimeType: 'application/pdf', buffer: signed })
  await expect(page.getByTestId('verdict-title')).toHaveText('Valid signature')
  await expect(page.getByTestId('check-record')).toContainText('Yes: the minutes of Kelderwick sea-front defences')
})
