import type { Page } from '@playwright/test'
import { expect, test, uniqueEmail } from './fixtures'

/**
 * A small sea-front ledger with one of each status. Cost is minimised (limit 30 £m, inclusive),
 * homes maximised. The efficient front is North Wall (10, 100), Dune Nourishment (20, 150) and
 * Tidal Barrier (30, 300); Dune Nourishment lies below the line from North Wall to Tidal Barrier
 * (normalised: 0.5 and 0.25 against a chord through (1, 0) and (0, 1)), so no weighting picks it.
 */
const criteria = [
  { id: 'cost', name: 'Capital cost', unit: '£m', direction: 'min', highest: 30, precision: 1 },
  { id: 'homes', name: 'Homes protected', unit: 'homes', direction: 'max', precision: 0 },
]
const alternatives = [
  { id: 'wall', name: 'North Wall', scores: { cost: 10, homes: 100 } },
  { id: 'dunes', name: 'Dune Nourishment', scores: { cost: 20, homes: 150 } },
  { id: 'barrier', name: 'Tidal Barrier', scores: { cost: 30, homes: 300 } },
  { id: 'reef', name: 'Offshore Reef', scores: { cost: 31.5, homes: 400 } },
  { id: 'groynes', name: 'Groyne Field', scores: { cost: 25, homes: 120 } },
  { id: 'retreat', name: 'Managed Retreat', scores: { cost: 10, homes: 90 } },
]
const EFFICIENT = ['North Wall', 'Dune Nourishment', 'Tidal Barrier']

/** Signs a new facilitator in (the page shares the cookies) and saves the ledger in a new room. */
async function openRoomWithLedger(page: Page) {
  const signUp = await page.request.post('/api/auth/sign-up', {
    data: { displayName: 'Ledger Viewer', email: uniqueEmail('ledger-view'), password: 'a-long-enough-password' },
  })
  expect(signUp.status()).toBe(201)
  const room = await page.request.post('/api/rooms', { data: { title: 'Sea-front defences', question: 'Which defence should the town build first?' } })
  expect(room.status()).toBe(201)
  const { id } = await room.json()
  const saved = await page.request.put(`/api/rooms/${id}/ledger`, { data: { baseVersion: 0, criteria, alternatives } })
  expect(saved.status()).toBe(201)
  await page.goto(`/rooms/${id}`)
  // The charts draw only once the page is interactive: a sign that clicks will be handled.
  await expect(page.getByTestId('front-chart').locator('svg.apexcharts-svg')).toBeVisible()
}

const rows = (page: Page) => page.getByTestId('ledger-row')
/** The table row of one option (by its row header: other rows may name it in their reasons). */
const row = (page: Page, name: string) => rows(page).filter({ has: page.getByRole('rowheader', { name, exact: true }) })
const rowNames = (page: Page) => rows(page).locator('th').allTextContents().then(names => names.map(n => n.trim()))

test('the option table gives each status with its reason, and sorts, filters and searches', async ({ page }) => {
  await openRoomWithLedger(page)
  const table = page.getByTestId('ledger-table')
  await expect(page.getByTestId('ledger-counts')).toHaveText('6 options · 1 outside limits · 1 dominated · 1 weakly efficient only · 3 efficient (1 unsupported)')

  await expect(row(page, 'Offshore Reef')).toContainText('Outside limits: Capital cost 31.5 £m > 30.0 £m')
  await expect(row(page, 'Groyne Field')).toContainText('Dominated by Dune Nourishment — worse on Capital cost and Homes protected')
  await expect(row(page, 'Managed Retreat')).toContainText('Weakly efficient only: dominated by North Wall — worse on Homes protected')
  await expect(row(page, 'Dune Nourishment')).toContainText('Efficient but unsupported: no slider weighting picks this')
  await expect(row(page, 'North Wall').locator('[data-status]')).toHaveAttribute('data-status', 'efficient')
  // Each status has a shape as well as its word.
  await expect(row(page, 'Offshore Reef').locator('[data-status="infeasible"] svg')).toBeVisible()
  await expect(table.getByRole('columnheader', { name: /Capital cost.*lower is better/ })).toBeVisible()
  await expect(table.getByRole('columnheader', { name: /Homes protected.*higher is better/ })).toBeVisible()

  // Unsorted: ledger order. Cost sorts best (lowest) first, ties in ledger order; again reverses.
  expect(await rowNames(page)).toEqual(alternatives.map(a => a.name))
  const costHeader = table.getByRole('columnheader', { name: /Capital cost/ })
  await costHeader.getByRole('button').click()
  await expect(costHeader).toHaveAttribute('aria-sort', 'ascending')
  expect(await rowNames(page)).toEqual(['North Wall', 'Managed Retreat', 'Dune Nourishment', 'Groyne Field', 'Tidal Barrier', 'Offshore Reef'])
  await costHeader.getByRole('button').press('Enter')
  await expect(costHeader).toHaveAttribute('aria-sort', 'descending')
  expect(await rowNames(page)).toEqual(['Offshore Reef', 'Tidal Barrier', 'Groyne Field', 'Dune Nourishment', 'North Wall', 'Managed Retreat'])
  // Homes are maximised: best first means most homes first; the cost column is no longer sorted.
  const homesHeader = table.getByRole('columnheader', { name: /Homes protected/ })
  await homesHeader.getByRole('button').click()
  await expect(homesHeader).toHaveAttribute('aria-sort', 'descending')
  await expect(costHeader).not.toHaveAttribute('aria-sort', /.+/)
  expect(await rowNames(page)).toEqual(['Offshore Reef', 'Tidal Barrier', 'Dune Nourishment', 'Groyne Field', 'North Wall', 'Managed Retreat'])

  const chips = page.getByRole('group', { name: 'Show options by status' })
  await chips.getByRole('button', { name: /Dominated/ }).click()
  await expect(chips.getByRole('button', { name: /Dominated/ })).toHaveAttribute('aria-pressed', 'true')
  await expect(rows(page)).toHaveCount(1)
  await expect(rows(page)).toContainText('Groyne Field')
  await chips.getByRole('button', { name: /^Efficient \d/ }).click()
  await expect(rows(page)).toHaveCount(3)
  expect((await rowNames(page)).sort()).toEqual([...EFFICIENT].sort())
  await chips.getByRole('button', { name: /unsupported/ }).click()
  expect(await rowNames(page)).toEqual(['Dune Nourishment'])
  await chips.getByRole('button', { name: /Outside limits/ }).click()
  expect(await rowNames(page)).toEqual(['Offshore Reef'])
  await chips.getByRole('button', { name: /^All/ }).click()
  await expect(rows(page)).toHaveCount(6)

  await table.getByLabel('Find an option by name').fill('wall')
  await expect(rows(page)).toHaveCount(1)
  await expect(rows(page)).toContainText('North Wall')
  await table.getByLabel('Find an option by name').fill('no such option')
  await expect(rows(page)).toHaveCount(0)
  await expect(table).toContainText('No option matches these filters.')
  await table.getByRole('button', { name: 'Show every option' }).click()
  await expect(rows(page)).toHaveCount(6)
})

test('the front chart and the value paths draw, with tables of the efficient options', async ({ page }, testInfo) => {
  if (testInfo.project.name === 'phone') await page.setViewportSize({ width: 360, height: 780 })
  await openRoomWithLedger(page)
  const sideways = () => page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)
  expect(await sideways()).toBeLessThanOrEqual(0)

  const front = page.getByTestId('front-chart')
  await expect(front.getByLabel('Across (x axis)')).toHaveValue('cost')
  await expect(front.getByLabel('Up (y axis)')).toHaveValue('homes')
  await expect(front.getByTestId('front-chart-summary')).toHaveText('On Capital cost and Homes protected alone, 3 options form the front: North Wall, Dune Nourishment and Tidal Barrier.')
  // Each point is named on hover (desktop) or tap (phone).
  const northWall = front.locator('.apexcharts-series[seriesName="Efficient"] .apexcharts-marker').first()
  if (testInfo.project.name === 'phone') await northWall.tap({ force: true })
  else await northWall.hover({ force: true })
  await expect(front.locator('.apexcharts-tooltip')).toContainText('North Wall')
  await expect(front.locator('.apexcharts-tooltip')).toContainText('Capital cost: 10.0 £m')
  await front.getByText('The chart as a table').click()
  const frontTable = front.getByTestId('front-chart-table')
  await expect(frontTable).toBeVisible()
  for (const name of EFFICIENT) await expect(frontTable.getByRole('rowheader', { name })).toBeVisible()
  await expect(frontTable).not.toContainText('Groyne Field')
  await expect(frontTable.getByRole('row', { name: /Dune Nourishment/ })).toContainText('20.0 £m')

  // Hiding the options outside limits, then swapping the axes, redraws the chart.
  await front.getByLabel('Show options outside limits').uncheck()
  await expect(front.locator('svg.apexcharts-svg')).toBeVisible()
  await front.getByRole('button', { name: 'Swap axes' }).click()
  await expect(front.getByLabel('Across (x axis)')).toHaveValue('homes')
  await expect(front.getByTestId('front-chart-summary')).toContainText('On Homes protected and Capital cost alone')

  const paths = page.getByTestId('value-path-chart')
  await expect(paths.locator('svg.apexcharts-svg')).toBeVisible()
  for (const name of EFFICIENT) await expect(paths.locator('.apexcharts-legend')).toContainText(name)
  await paths.getByText('The chart as a table').click()
  const pathTable = paths.getByTestId('value-path-table')
  for (const name of EFFICIENT) await expect(pathTable.getByRole('row', { name: new RegExp(name) })).toBeVisible()
  await expect(pathTable).not.toContainText('Offshore Reef')
  // Dune Nourishment: 20 £m is halfway between 10 and 30; 150 homes a quarter of the way from 100 to 300.
  await expect(pathTable.getByRole('row', { name: /Dune Nourishment/ })).toContainText('20.0 £m (0.50)')
  await expect(pathTable.getByRole('row', { name: /Dune Nourishment/ })).toContainText('150 homes (0.25)')

  // With both tables open the page still does not scroll sideways (the tables scroll in their cards).
  expect(await sideways()).toBeLessThanOrEqual(0)
})
