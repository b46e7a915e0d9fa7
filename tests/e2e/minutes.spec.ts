import { spawnSync } from 'node:child_process'
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
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
 * first screen is kept as docs/screenshots/minutes.png and the signed PDF's first page, drawn by
 * poppler's pdftoppm, as docs/screenshots/minutes-pdf.png (both on every run, in the desktop
 * project, as tests/e2e/screenshots.spec.ts takes the others). Data: the invented Kelderwick demo.
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
  // Who signed: the name in the signature, and the signer this server recorded.
  await expect(page.getByTestId('check-signer-name')).toHaveText('Jem Carrow')
  await expect(page.getByTestId('check-record-signer')).toHaveText('Jem Carrow')

  // The signed PDF's first page, as poppler draws it, for the README beside the preview.
  const work = mkdtempSync(join(tmpdir(), 'counterpoise-minutes-e2e-'))
  try {
    const file = join(work, 'signed.pdf')
    writeFileSync(file, signed)
    const target = `${DIR}minutes-pdf.png`
    rmSync(target, { force: true })
    poppler('pdftoppm', ['-png', '-r', '80', '-f', '1', '-l', '1', '-singlefile', file, target.replace(/\.png$/, '')])
    // The picture is page 1 at 80 dpi: its size in pixels is the page size pdfinfo gives in points (1/72 in) × 80/72.
    const size = /Page\s+1 size:\s+([\d.]+) x ([\d.]+) pts/.exec(poppler('pdfinfo', ['-f', '1', '-l', '1', file]))
    expect(size, 'pdfinfo gives the page size').not.toBeNull()
    const png = readFileSync(target)
    expect(png.subarray(0, 8).toString('hex')).toBe('89504e470d0a1a0a')
    expect(Math.abs(png.readUInt32BE(16) - Number(size![1]) * 80 / 72)).toBeLessThanOrEqual(1)
    expect(Math.abs(png.readUInt32BE(20) - Number(size![2]) * 80 / 72)).toBeLessThanOrEqual(1)
    // …and it is the minutes' first page: poppler reads the room's title there.
    expect(poppler('pdftotext', ['-f', '1', '-l', '1', file, '-'])).toContain('Kelderwick sea-front defences')
  }
  finally {
    rmSync(work, { recursive: true, force: true })
  }
})

/** A poppler-utils command's output; poppler-utils is installed by the test script. */
function poppler(command: string, args: string[]): string {
  const run = spawnSync(command, args, { encoding: 'utf8' })
  if ((run.error as NodeJS.ErrnoException | undefined)?.code === 'ENOENT') throw new Error(`${command} is missing: apt-get install -y poppler-utils`)
  if (run.error) throw run.error
  expect(run.status, `${command}: ${run.stderr}`).toBe(0)
  return run.stdout
}
