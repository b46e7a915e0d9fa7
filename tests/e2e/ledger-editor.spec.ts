import { fileURLToPath } from 'node:url'
import type { Page } from '@playwright/test'
import { expect, test, uniqueEmail } from './fixtures'

/**
 * The facilitator's preparation path, through the real pages only: a new room, the criteria
 * editor, a broken upload that saves nothing, and a clean upload that becomes a new version.
 * The files are the committed upload fixtures (tests/fixtures/uploads/README.md): the nine
 * invented Kelderwick schemes on five criteria, and the same file with `n/a` in row 8, column D.
 */
const upload = (name: string) => fileURLToPath(new URL(`../fixtures/uploads/${name}`, import.meta.url))

/** The ledger version as the server has it (the count of versions: numbers go 1, 2, 3 …). */
async function versionNumber(page: Page, roomId: string) {
  const answer = await page.request.get(`/api/rooms/${roomId}/ledger`)
  expect(answer.ok()).toBe(true)
  const body = await answer.json() as { version: { number: number, hash: string } | null }
  return body.version
}

/** How far the page scrolls sideways (0 when everything fits the screen, as it must on a phone). */
const sideways = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)

const criterionRows = (page: Page) => page.getByTestId('criterion-row')
/** Fill one criterion's fields (by label, inside its own card). */
async function fillCriterion(page: Page, index: number, fields: { name: string, unit: string, direction: 'Lower is better' | 'Higher is better', highest?: string, precision?: string }) {
  const card = criterionRows(page).nth(index)
  await card.getByLabel('Name').fill(fields.name)
  await card.getByLabel('Unit').fill(fields.unit)
  await card.getByLabel('Which way is better').selectOption({ label: fields.direction })
  if (fields.highest !== undefined) await card.getByLabel('Highest acceptable').fill(fields.highest)
  if (fields.precision !== undefined) await card.getByLabel('Decimals shown').fill(fields.precision)
}

test('a facilitator defines criteria, is shown every problem of a broken upload, and confirms a clean one', async ({ page }) => {
  test.slow() // many steps, each waiting on the server
  // Sign up and create the room through the pages.
  await page.goto('/sign-up')
  await page.getByLabel('Your name').fill('Nessa Preparer')
  await page.getByLabel('E-mail address').fill(uniqueEmail('ledger-editor'))
  await page.getByLabel('Password').fill('a-long-enough-password')
  await page.getByRole('button', { name: 'Create account' }).click()
  await expect(page).toHaveURL(/\/rooms$/)
  await page.getByRole('link', { name: 'New room' }).click()
  await page.getByLabel('Title').fill('Kelderwick sea-front (rehearsal)')
  await page.getByLabel('Question the room decides').fill('Which sea-front defence should Kelderwick build?')
  await page.getByRole('button', { name: 'Create room' }).click()
  await expect(page.getByTestId('room-title')).toHaveText('Kelderwick sea-front (rehearsal)')
  const roomId = new URL(page.url()).pathname.split('/').pop()!
  expect(await versionNumber(page, roomId)).toBeNull()

  // ── criteria: add, rename, reorder, with units, directions and a hard limit ──
  await expect(page.getByText('This room has no criteria yet.')).toBeVisible()
  await page.getByTestId('edit-ledger').click()
  await expect(criterionRows(page)).toHaveCount(1)
  // Typed in a different order, and one misnamed, to be corrected below.
  await fillCriterion(page, 0, { name: 'Homes protected', unit: 'homes', direction: 'Higher is better', precision: '0' })
  for (let i = 0; i < 4; i++) await page.getByRole('button', { name: 'Add criterion' }).click()
  await expect(criterionRows(page)).toHaveCount(5)
  await fillCriterion(page, 1, { name: 'Capital cost', unit: '£m', direction: 'Lower is better', precision: '2' })
  await fillCriterion(page, 2, { name: 'Habitat lost', unit: 'ha', direction: 'Lower is better', highest: '12', precision: '1' })
  await fillCriterion(page, 3, { name: 'Years to build', unit: 'years', direction: 'Lower is better' })
  await fillCriterion(page, 4, { name: 'Amenity score', unit: '', direction: 'Higher is better' })
  // Rename: the file says "Habitat affected".
  await criterionRows(page).nth(2).getByLabel('Name').fill('Habitat affected')
  // Reorder: Capital cost first, as in the file (the order is what the table shows).
  await page.getByRole('button', { name: 'Move Capital cost up' }).click()
  await expect(criterionRows(page).nth(0).getByLabel('Name')).toHaveValue('Capital cost')
  await expect(criterionRows(page).nth(1).getByLabel('Name')).toHaveValue('Homes protected')
  await expect(page.getByRole('button', { name: 'Move Capital cost up' })).toBeDisabled()
  // The editor's alternatives table scrolls inside its card, not the page (on a phone too).
  expect(await sideways(page)).toBeLessThanOrEqual(0)
  // A move down and back up again leaves the order as it was.
  await page.getByRole('button', { name: 'Move Habitat affected down' }).click()
  await expect(criterionRows(page).nth(3).getByLabel('Name')).toHaveValue('Habitat affected')
  await page.getByRole('button', { name: 'Move Habitat affected up' }).click()
  await expect(criterionRows(page).nth(2).getByLabel('Name')).toHaveValue('Habitat affected')
  // A mistake in a limit is caught in the form, and nothing is saved.
  await criterionRows(page).nth(2).getByLabel('Highest acceptable').fill('twelve')
  await page.getByRole('button', { name: 'Save as version 1' }).click()
  await expect(page.getByTestId('ledger-problems')).toContainText('Criterion 3 (Habitat affected), highest acceptable: “twelve” is not a number.')
  expect(await versionNumber(page, roomId)).toBeNull()
  await criterionRows(page).nth(2).getByLabel('Highest acceptable').fill('12')
  await page.getByRole('button', { name: 'Save as version 1' }).click()

  await expect(page.getByTestId('ledger-version')).toContainText('Ledger version 1')
  const first = (await versionNumber(page, roomId))!
  expect(first.number).toBe(1)
  await expect(page.getByText('No alternatives yet.')).toBeVisible()

  // The saved criteria, in the order set above, come back into the editor as they were saved.
  await page.getByTestId('edit-ledger').click()
  const names = await criterionRows(page).getByLabel('Name').evaluateAll(inputs => inputs.map(i => (i as HTMLInputElement).value))
  expect(names).toEqual(['Capital cost', 'Homes protected', 'Habitat affected', 'Years to build', 'Amenity score'])
  await expect(criterionRows(page).nth(2).getByLabel('Highest acceptable')).toHaveValue('12')
  await expect(criterionRows(page).nth(1).getByLabel('Which way is better')).toHaveValue('max')
  await expect(criterionRows(page).nth(0).getByLabel('Unit')).toHaveValue('£m')
  await page.getByRole('button', { name: 'Cancel' }).click()

  // ── a broken file: every problem by row and column, nothing saved ──
  const uploader = page.getByTestId('ledger-upload')
  await uploader.getByTestId('upload-input').setInputFiles(upload('non-numeric.csv'))
  await expect(uploader.getByTestId('upload-summary')).toHaveText(/non-numeric\.csv has 1 problem to fix before it can be saved\. Nothing has been saved/)
  const problems = uploader.getByTestId('upload-problems')
  // The column by its header, the row as the spreadsheet numbers it (the header is row 1).
  await expect(problems.getByRole('listitem').first()).toContainText('1 cell in Habitat affected (ha) is not a number')
  await expect(problems).toContainText('Row 8: \'n/a\' is not a number.')
  await expect(uploader.getByTestId('upload-confirm')).toBeDisabled()
  await expect(uploader.getByTestId('upload-confirm')).toHaveText('Confirm (fix the problems first)')
  // The preview still shows the rest of the file, with the gap marked.
  await expect(uploader.getByTestId('upload-preview').getByRole('rowheader', { name: 'Dune restoration' })).toBeVisible()
  await expect(uploader.getByTestId('upload-preview')).toContainText('no number')
  expect(await versionNumber(page, roomId)).toEqual(first)
  await expect(page.getByTestId('ledger-version')).toContainText('Ledger version 1')

  // A second broken file (two spellings of one name) is refused the same way.
  await uploader.getByTestId('upload-input').setInputFiles(upload('duplicate-name.csv'))
  await expect(uploader.getByTestId('upload-summary')).toHaveText(/duplicate-name\.csv has 1 problem/)
  await expect(uploader.getByTestId('upload-problems')).toContainText(/row 7/i)
  await expect(uploader.getByTestId('upload-problems')).toContainText(/Rock revetment/i)
  await expect(uploader.getByTestId('upload-confirm')).toBeDisabled()
  await uploader.getByTestId('upload-cancel').click()
  await expect(uploader.getByTestId('upload-summary')).toHaveCount(0)
  expect(await versionNumber(page, roomId)).toEqual(first)

  // ── the clean file: preview, confirm, a new version with its hash, the option table ──
  await uploader.getByTestId('upload-input').setInputFiles(upload('kelderwick.csv'))
  await expect(uploader.getByTestId('upload-summary')).toHaveText('9 alternatives read from kelderwick.csv. Check the table below, then confirm.')
  await expect(uploader.getByTestId('upload-problems')).toHaveCount(0)
  const preview = uploader.getByTestId('upload-preview')
  await expect(preview.getByRole('row')).toHaveCount(10)
  await expect(preview.getByRole('columnheader', { name: /Homes protected.*higher is better/ })).toBeVisible()
  // Shown with each criterion's decimals: 8.75 £m with two, 14.5 ha with one.
  await expect(preview.getByRole('row', { name: /Managed realignment at Saltings/ })).toContainText('8.75')
  await expect(preview.getByRole('row', { name: /Managed realignment at Saltings/ })).toContainText('14.5')
  await expect(preview.getByRole('rowheader', { name: 'Do minimum ("repair only")' })).toBeVisible()
  expect(await sideways(page)).toBeLessThanOrEqual(0)
  // Previewing alone saves nothing.
  expect(await versionNumber(page, roomId)).toEqual(first)

  await uploader.getByTestId('upload-confirm').click()
  await expect(uploader.getByTestId('upload-notice')).toHaveText('Saved as ledger version 2: 9 alternatives from kelderwick.csv.')
  const second = (await versionNumber(page, roomId))!
  expect(second.number).toBe(2)
  expect(second.hash).toMatch(/^[0-9a-f]{64}$/)
  expect(second.hash).not.toBe(first.hash)
  const versionLine = page.getByTestId('ledger-version')
  await expect(versionLine).toContainText('Ledger version 2')
  // The short hash shown is the start of the full SHA-256, which its title gives.
  const shortHash = versionLine.locator('.font-mono')
  await expect(shortHash).toHaveAttribute('title', `SHA-256 ${second.hash}`)
  expect(second.hash.startsWith((await shortHash.textContent())!.trim())).toBe(true)

  // The option table with its status counts. Worked out outside the project (python3 with
  // scipy.optimize.linprog, 2 December 2026): only Managed realignment breaks the 12 ha habitat
  // limit; none of the other eight is dominated, even weakly, and each is the best choice for some
  // slider weighting (a feasible LP over the simplex of weights), so none is unsupported.
  const table = page.getByTestId('ledger-table')
  await expect(page.getByTestId('ledger-row')).toHaveCount(9)
  await expect(page.getByTestId('ledger-counts')).toHaveText('9 options · 1 outside limits · 0 dominated · 8 efficient')
  const saltings = page.getByTestId('ledger-row').filter({ has: page.getByRole('rowheader', { name: 'Managed realignment at Saltings', exact: true }) })
  await expect(saltings).toContainText('Outside limits: Habitat affected 14.5 ha > 12.0 ha')
  await expect(table.getByRole('columnheader', { name: /Capital cost.*lower is better/ })).toBeVisible()
  const chips = page.getByRole('group', { name: 'Show options by status' })
  await expect(chips.getByRole('button', { name: /^Efficient/ })).toContainText('8')
  await expect(chips.getByRole('button', { name: /Outside limits/ })).toContainText('1')
})
