/**
 * The weight space of a revealed weighing in a three-criterion room: the triangle with every
 * stakeholder's dot and the group's ring, exact region shares, acceptability computed in the
 * browser's worker (checked against the exact areas within its stated error), the compromise
 * candidate as the engine names it, and a phone's stability sentence.
 */
import { analyseLedger } from '../../shared/utils/ledger'
import { compromiseCandidate } from '../../shared/utils/compromise'
import { weightMap } from '../../shared/utils/weightMap'
import { closeTestDb } from '../support/db'
import { expect, test } from './fixtures'
import { closePhones, member, roomWithLedger, weigh } from './people'

// An invented clinic-access scenario: three criteria, four efficient plans, one dominated.
const criteria = [
  { id: 'cost', name: 'Running cost', unit: '£k/yr', direction: 'min', precision: 0 },
  { id: 'wait', name: 'Waiting time', unit: 'days', direction: 'min', precision: 0 },
  { id: 'reach', name: 'People reached', unit: 'people', direction: 'max', precision: 0 },
] as const
const alternatives = [
  { id: 'annex', name: 'Hillside Annex', scores: { cost: 100, wait: 30, reach: 500 } },
  { id: 'evening', name: 'Evening Clinic', scores: { cost: 200, wait: 10, reach: 600 } },
  { id: 'van', name: 'Mobile Van Fleet', scores: { cost: 300, wait: 20, reach: 1500 } },
  { id: 'reception', name: 'Shared Reception', scores: { cost: 190, wait: 22, reach: 700 } },
  { id: 'depot', name: 'Old Depot Refit', scores: { cost: 320, wait: 35, reach: 1400 } },
]
const weightings = [[0.7, 0.2, 0.1], [0.1, 0.7, 0.2], [0.1, 0.2, 0.7]]
const analysis = analyseLedger([...criteria], alternatives)
const nameOf = (id: string) => alternatives.find(a => a.id === id)!.name

test.afterAll(async () => {
  closePhones()
  await closeTestDb()
})

test('a revealed weighing shows the triangle, acceptability, the compromise and, on a phone, stability', async ({ page, browser, baseURL }, testInfo) => {
  test.skip(testInfo.project.name !== 'desktop', 'the facilitator works at a desktop; the phone opens its own context')
  test.setTimeout(120_000)
  const roomId = await roomWithLedger(page, 'Clinic access', { criteria: [...criteria], alternatives }, 'How should the clinic reach more people?')
  const people = await Promise.all(['Iona', 'Jude', 'Kit'].map(name => member(baseURL!, roomId, `${name} Weigher`, 'stakeholder')))
  const opened = await page.request.post(`/api/rooms/${roomId}/weighings`, { data: { inputStyle: 'sliders', showNames: true } })
  expect(opened.status()).toBe(201)
  const weighingId = (await opened.json()).id as string
  for (const [i, person] of people.entries()) expect(await weigh(baseURL!, person, roomId, weighingId, weightings[i]!)).toMatchObject({ ok: true })
  // While the weighing is open, a stakeholder's phone says how firmly their favourite holds.
  const phone = await browser.newContext({ baseURL, viewport: { width: 360, height: 740 }, isMobile: true, hasTouch: true })
  await phone.addCookies(people[0]!.cookie.split('; ').map((pair) => {
    const [name, ...value] = pair.split('=')
    return { name: name!, value: value.join('='), url: baseURL! }
  }))
  const phonePage = await phone.newPage()
  await phonePage.goto(`/rooms/${roomId}/balance`)
  await expect(phonePage.getByTestId('stability')).toContainText(/Your favourite (stays the same|is close to a tie)/)
  await phone.close()
  expect((await page.request.post(`/api/rooms/${roomId}/weighings/${weighingId}/close`)).status()).toBe(200)
  expect((await page.request.post(`/api/rooms/${roomId}/weighings/${weighingId}/reveal`)).status()).toBe(200)

  await page.goto(`/rooms/${roomId}?tab=weigh`)
  const space = page.getByTestId('weight-space')
  await expect(space).toBeVisible()
  const triangle = space.getByTestId('weight-triangle')
  await expect(triangle.getByTestId('weighting-dot')).toHaveCount(3)
  await expect(triangle.getByTestId('group-dot')).toHaveCount(1)

  // The listed shares are the exact polygon areas (rounded to whole percent).
  const exact = weightMap(analysis)
  const shares = triangle.getByTestId('triangle-shares').getByRole('listitem')
  const drawn = exact.regions.filter(r => r.points.length > 0 && !r.degenerate)
  await expect(shares).toHaveCount(drawn.length)
  for (const region of drawn) {
    await expect(shares.filter({ hasText: nameOf(region.alternativeId) })).toContainText(`${Math.round(region.share * 100)}%`)
  }

  // Acceptability over any weighting, from the worker: within 4 standard errors of the exact
  // areas (uniform weights on the triangle are uniform on the simplex), plus display rounding.
  await expect(space.getByTestId('acceptability-progress')).toHaveCount(0, { timeout: 30_000 })
  const anyWeighting = space.getByTestId('acceptability').filter({ hasText: 'Any weighting at all' })
  await expect(anyWeighting.locator('tbody tr')).toHaveCount(analysis.efficientIds.length)
  for (const id of analysis.efficientIds) {
    const row = anyWeighting.locator(`tr[data-alternative="${id}"]`)
    const cells = await row.locator('td').allTextContents()
    const shown = Number.parseFloat(cells[0]!.replace('%', ''))
    const error = Number.parseFloat(cells[1]!.replace('±', ''))
    const truth = exact.regions.find(r => r.alternativeId === id)!.share * 100
    expect(Math.abs(shown - truth), `${nameOf(id)}: shown ${shown}%, exact ${truth.toFixed(2)}% ± ${error}`).toBeLessThanOrEqual(4 * Math.max(error, 0.1) + 0.5)
  }
  await expect(space.getByTestId('acceptability').filter({ hasText: 'Within the range the stakeholders submitted' })).toBeVisible()

  // The compromise candidate is the one the engine names, and nobody's favourite is listed to drop.
  const compromise = compromiseCandidate(analysis, weightings)
  await expect(space.getByTestId('compromise')).toContainText(nameOf(compromise.compromise!.alternativeId))
  expect(compromise.unfavouredIds.length).toBeGreaterThan(0)
  await expect(space.getByTestId('unfavoured')).toContainText(compromise.unfavouredIds.map(nameOf)[0]!)
  await expect(space.getByTestId('group-stability')).toContainText('The group favourite stays the same while')
  await space.getByTestId('weight-triangle').scrollIntoViewIfNeeded()
  await space.screenshot({ path: 'docs/screenshots/weight-space.png' })
})
