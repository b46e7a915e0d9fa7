/**
 * The weight space of a revealed weighing in a three-criterion room: the triangle with every
 * stakeholder's dot and the group's ring, exact region shares, a region picked from the list by
 * keyboard and by a tap on a phone with its share read out, acceptability computed in the
 * browser's worker (checked against the exact areas within its stated error), one rank
 * acceptability and one central weight against their exact values, the weight space following the
 * group rule picked above it, the compromise candidate as the engine names it, and a phone's
 * stability sentence.
 */
import type { Locator } from '@playwright/test'
import { analyseLedger } from '../../shared/utils/ledger'
import { compromiseCandidate } from '../../shared/utils/compromise'
import { weightedSumFavourite } from '../../shared/utils/scalarise'
import { stabilitySentence } from '../../shared/utils/stabilityWords'
import { weightMap } from '../../shared/utils/weightMap'
import { seedFromText } from '../../shared/utils/weightSpace'
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

/** SVG points attribute ("x,y x,y …") as numbers. */
function pointsOf(attribute: string | null): [number, number][] {
  return (attribute ?? '').trim().split(/\s+/).map(pair => pair.split(',').map(Number) as [number, number])
}

/** Where a weighting of the three corners sits, as the same barycentric mix of the outline's drawn corners. */
async function expectedSvgPoint(triangle: Locator, t: readonly number[]): Promise<[number, number]> {
  const corners = pointsOf(await triangle.locator('svg > polygon[fill="none"]').getAttribute('points'))
  expect(corners).toHaveLength(3)
  return [0, 1].map(axis => corners.reduce((sum, corner, c) => sum + t[c]! * corner[axis]!, 0)) as [number, number]
}

/** Taps a drawn region at the mean of its vertices (inside it: regions are convex). */
async function tapRegion(region: Locator) {
  const points = pointsOf(await region.getAttribute('points'))
  const xs = points.map(p => p[0])
  const ys = points.map(p => p[1])
  const box = (await region.boundingBox())!
  const scale = box.width / (Math.max(...xs) - Math.min(...xs))
  const mean = (values: number[]) => values.reduce((a, b) => a + b, 0) / values.length
  await region.tap({ position: { x: (mean(xs) - Math.min(...xs)) * scale, y: (mean(ys) - Math.min(...ys)) * scale } })
}

/** A cell like "58% ± 0.5" as its value and its standard error, in percent. */
function cellValue(text: string): { value: number, error: number } {
  const match = /([\d.]+)%\s*±\s*([\d.]+)/.exec(text)
  expect(match, `a value with its error in "${text}"`).not.toBeNull()
  return { value: Number.parseFloat(match![1]!), error: Number.parseFloat(match![2]!) }
}

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

  // Keyboard: a name in the list picks its region out, visibly, and the readout names its share.
  const evening = exact.regions.find(r => r.alternativeId === 'evening')!
  const readout = triangle.getByTestId('triangle-readout')
  const eveningButton = triangle.getByTestId('triangle-shares').locator('button[data-region="evening"]')
  const vanButton = triangle.getByTestId('triangle-shares').locator('button[data-region="van"]')
  const unpressedBackground = await eveningButton.evaluate(e => getComputedStyle(e).backgroundColor)
  await eveningButton.focus()
  await page.keyboard.press('Enter')
  await expect(eveningButton).toHaveAttribute('aria-pressed', 'true')
  await expect(vanButton).toHaveAttribute('aria-pressed', 'false')
  await expect(readout).toHaveText(`Evening Clinic — ${Math.round(evening.share * 100)}% of the triangle`)
  await expect(triangle.locator('polygon[data-region="evening"]')).toHaveAttribute('data-selected', 'true')
  // The pressed state shows, not only in the markup (the unpressed colour was read before focus or hover).
  expect(await eveningButton.evaluate(e => getComputedStyle(e).backgroundColor)).not.toBe(unpressedBackground)
  expect(await vanButton.evaluate(e => getComputedStyle(e).backgroundColor)).toBe(unpressedBackground)
  await page.keyboard.press('Escape')
  await expect(eveningButton).toHaveAttribute('aria-pressed', 'false')
  await expect(readout).not.toContainText('Evening Clinic')

  // Acceptability over any weighting, from the worker: within 4 standard errors of the exact
  // areas (uniform weights on the triangle are uniform on the simplex), plus display rounding.
  await expect(space.getByTestId('acceptability-progress')).toHaveCount(0, { timeout: 30_000 })
  // The draws shown here are the ones the minutes record for this round: one function on both sides,
  // the seed being the FNV-1a hash of the weighing's id.
  const minutes = await page.request.get(`/api/rooms/${roomId}/minutes`)
  expect(minutes.status()).toBe(200)
  const [round] = (await minutes.json() as { rounds: { acceptability: { samples: number, seed: number } }[] }).rounds
  expect(round!.acceptability).toEqual({ samples: 10_000, seed: seedFromText(weighingId) })
  await expect(space.getByTestId('acceptability-seed')).toHaveText(String(round!.acceptability.seed))
  await expect(space.getByTestId('acceptability-samples')).toHaveText('10,000')
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

  // Every rank and the central weightings, folded away. Two cells against exact values: the last
  // rank (4th of 4 efficient) is first place when every value is negated, so its share is a region
  // area of the negated table; the central weighting of a region is its centroid, since weights
  // are uniform on the triangle. Within 4 standard errors plus display rounding.
  const ranks = space.getByTestId('acceptability-block').filter({ hasText: 'Any weighting at all' }).getByTestId('rank-acceptability')
  await expect(ranks.locator('td[data-rank]').first()).toBeHidden()
  await ranks.locator('summary').click()
  const n = analysis.efficientIds.length
  expect(n).toBe(4)
  const last = weightMap({ ...analysis.normalised, values: analysis.normalised.values.map(v => -v) })
  const annexLast = last.regions.find(r => r.alternativeId === 'annex')!.share * 100
  const lastCell = cellValue(await ranks.locator(`tr[data-alternative="annex"] td[data-rank="${n}"]`).innerText())
  expect(Math.abs(lastCell.value - annexLast), `Hillside Annex last: shown ${lastCell.value}%, exact ${annexLast.toFixed(2)}%`).toBeLessThanOrEqual(4 * Math.max(lastCell.error, 0.1) + 0.5)
  const centralCost = evening.centroid![0] * 100
  const centralCell = cellValue(await ranks.locator('tr[data-alternative="evening"] td[data-central="cost"]').innerText())
  expect(Math.abs(centralCell.value - centralCost), `Evening Clinic central cost weight: shown ${centralCell.value}%, exact ${centralCost.toFixed(2)}%`).toBeLessThanOrEqual(4 * Math.max(centralCell.error, 0.1) + 0.5)
  await expect(ranks.locator(`tr[data-alternative="evening"] td[data-rank]`)).toHaveCount(n)

  // The compromise candidate is the one the engine names, and nobody's favourite is listed to drop.
  const compromise = compromiseCandidate(analysis, weightings)
  await expect(space.getByTestId('compromise')).toContainText(nameOf(compromise.compromise!.alternativeId))
  expect(compromise.unfavouredIds.length).toBeGreaterThan(0)
  await expect(space.getByTestId('unfavoured')).toContainText(compromise.unfavouredIds.map(nameOf)[0]!)
  await expect(space.getByTestId('group-stability')).toContainText('The group favourite stays the same while')

  // The weight space follows the group rule picked in the results. The per-criterion median of
  // these (already normalised) weightings, rescaled, is 20/40/40 and favours another alternative
  // than the mean does, so the ring, the favourite and the stability lines must all move.
  const mean = [0, 1, 2].map(k => weightings.reduce((sum, w) => sum + w[k]!, 0) / weightings.length)
  const medianRaw = [0, 1, 2].map(k => weightings.map(w => w[k]!).sort((a, b) => a - b)[1]!)
  const median = medianRaw.map(x => x / medianRaw.reduce((a, b) => a + b, 0))
  const ring = triangle.getByTestId('group-dot').locator('circle')
  const ringAt = async () => [Number(await ring.getAttribute('cx')), Number(await ring.getAttribute('cy'))]
  const meanAt = await expectedSvgPoint(triangle, mean)
  expect((await ringAt()).map((x, axis) => Math.abs(x - meanAt[axis]!))).toEqual([expect.closeTo(0, 3), expect.closeTo(0, 3)])
  const medianFavourite = weightedSumFavourite(analysis, median)
  expect(medianFavourite.winners).not.toEqual(weightedSumFavourite(analysis, mean).winners)
  await page.getByTestId('group-weighting').getByRole('radio', { name: /^Median/ }).check()
  await expect(page.getByTestId('group-favourite')).toContainText(nameOf(medianFavourite.winners[0]!))
  await expect(space.getByTestId('spread-group')).toContainText(`median, as chosen above: Running cost ${Math.round(median[0]! * 100)}%, Waiting time ${Math.round(median[1]! * 100)}%, People reached ${Math.round(median[2]! * 100)}%`)
  const medianAt = await expectedSvgPoint(triangle, median)
  await expect.poll(async () => (await ringAt()).map((x, axis) => Math.round(Math.abs(x - medianAt[axis]!)))).toEqual([0, 0])
  const expectedLines = criteria.map((_, k) => stabilitySentence(analysis, medianFavourite, k, nameOf, 'The group favourite')).filter(Boolean)
  expect(expectedLines.length).toBeGreaterThan(0)
  await expect(space.getByTestId('group-stability').getByRole('listitem')).toHaveText(expectedLines)
  await expect(space.getByTestId('compromise')).toContainText(nameOf(medianFavourite.winners[0]!))
  await expect(space.getByTestId('compromise')).toContainText('median')
  await page.getByTestId('group-weighting').getByRole('radio', { name: /^Mean/ }).check()
  await expect(space.getByTestId('spread-group')).toContainText('mean, as chosen above')
  await space.getByTestId('weight-triangle').scrollIntoViewIfNeeded()
  await space.screenshot({ path: 'docs/screenshots/weight-space.png' })

  // On a 360 px phone (no hover, so no SVG titles): a tap on a region reads out its name and share.
  const facilitatorPhone = await browser.newContext({ baseURL, viewport: { width: 360, height: 740 }, isMobile: true, hasTouch: true })
  await facilitatorPhone.addCookies(await page.context().cookies())
  const small = await facilitatorPhone.newPage()
  await small.goto(`/rooms/${roomId}?tab=weigh`)
  const smallTriangle = small.getByTestId('weight-space').getByTestId('weight-triangle')
  const eveningRegion = smallTriangle.locator('polygon[data-region="evening"]')
  await expect(eveningRegion).toBeVisible()
  await tapRegion(eveningRegion)
  await expect(smallTriangle.getByTestId('triangle-readout')).toHaveText(`Evening Clinic — ${Math.round(evening.share * 100)}% of the triangle`)
  await expect(eveningRegion).toHaveAttribute('data-selected', 'true')
  await expect(smallTriangle.locator('button[data-region="evening"]')).toHaveAttribute('aria-pressed', 'true')
  // A second tap lets it go.
  await tapRegion(eveningRegion)
  await expect(smallTriangle.getByTestId('triangle-readout')).not.toContainText('Evening Clinic')
  await facilitatorPhone.close()
})

test('with four criteria, changing a corner redraws the regions with the fourth held at the group weight', async ({ page, baseURL }, testInfo) => {
  test.skip(testInfo.project.name !== 'desktop', 'the facilitator works at a desktop')
  test.setTimeout(120_000)
  const criteria4 = [...criteria, { id: 'staff', name: 'Staff needed', unit: 'people', direction: 'min', precision: 0 }] as const
  const staff: Record<string, number> = { annex: 9, evening: 14, van: 20, reception: 4, depot: 25 }
  const alternatives4 = alternatives.map(a => ({ ...a, scores: { ...a.scores, staff: staff[a.id]! } }))
  const weightings4 = [[0.4, 0.2, 0.1, 0.3], [0.1, 0.5, 0.2, 0.2], [0.1, 0.2, 0.5, 0.2]]
  const analysis4 = analyseLedger([...criteria4], alternatives4)
  const roomId = await roomWithLedger(page, 'Clinic access, with staff', { criteria: [...criteria4], alternatives: alternatives4 }, 'How should the clinic reach more people?')
  const people = await Promise.all(['Lior', 'Mika', 'Noor'].map(name => member(baseURL!, roomId, `${name} Weigher`, 'stakeholder')))
  const opened = await page.request.post(`/api/rooms/${roomId}/weighings`, { data: { inputStyle: 'sliders', showNames: true } })
  expect(opened.status()).toBe(201)
  const weighingId = (await opened.json()).id as string
  for (const [i, person] of people.entries()) expect(await weigh(baseURL!, person, roomId, weighingId, weightings4[i]!)).toMatchObject({ ok: true })
  expect((await page.request.post(`/api/rooms/${roomId}/weighings/${weighingId}/close`)).status()).toBe(200)
  expect((await page.request.post(`/api/rooms/${roomId}/weighings/${weighingId}/reveal`)).status()).toBe(200)

  await page.goto(`/rooms/${roomId}?tab=weigh`)
  const triangle = page.getByTestId('weight-space').getByTestId('weight-triangle')
  await expect(triangle.getByTestId('weighting-dot')).toHaveCount(3)
  // The group (mean) weighting holds the criterion that is not a corner.
  const mean = [0, 1, 2, 3].map(k => weightings4.reduce((sum, w) => sum + w[k]!, 0) / weightings4.length)
  const cornerSelects = [0, 1, 2].map(c => page.getByTestId(`triangle-corner-${c}`))
  const shownShares = async (corners: [string, string, string]) => {
    const exact = weightMap(analysis4, { criteria: corners, held: mean })
    const drawn = exact.regions.filter(r => r.points.length > 0 && !r.degenerate)
    const rows = triangle.getByTestId('triangle-shares').getByRole('listitem')
    await expect(rows).toHaveCount(drawn.length)
    for (const region of drawn) {
      await expect(rows.filter({ hasText: nameOf(region.alternativeId) })).toContainText(`${Math.round(region.share * 100)}%`)
    }
    const heldShare = Math.round((1 - exact.cornerShare) * 100)
    await expect(triangle).toContainText(`held at the group's weights (${heldShare}% together)`)
    return exact
  }
  const before = await Promise.all(cornerSelects.map(s => s.inputValue())) as [string, string, string]
  const held = criteria4.map(c => c.id).find(id => !before.includes(id))!
  const exactBefore = await shownShares(before)

  // Put the held criterion at the last corner; the one it replaces is now held at the group's weight.
  await cornerSelects[2]!.selectOption(held)
  const after: [string, string, string] = [before[0], before[1], held]
  const exactAfter = await shownShares(after)
  // The test means something only if the regions really differ between the two choices.
  expect(exactAfter.regions.map(r => r.share.toFixed(3))).not.toEqual(exactBefore.regions.map(r => r.share.toFixed(3)))
  await expect(triangle.getByTestId('weighting-dot')).toHaveCount(3)
  await expect(triangle.locator('svg')).toContainText(criteria4.find(c => c.id === held)!.name)
})
