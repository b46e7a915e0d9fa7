import { request as playwrightRequest, type APIRequestContext, type Locator, type Page } from '@playwright/test'
import { largestRemainderPercentages } from '../../shared/utils/percentages'
import { testDb } from '../support/db'
import { expect, test, uniqueEmail } from './fixtures'

/**
 * A sea-front ledger with three criteria. Efficient: North Wall, Tidal Barrier, Dune Nourishment;
 * Groyne Field is dominated by Dune Nourishment and Offshore Reef breaks the 30 £m limit, so the
 * range of Capital cost among the shortlist is 4.0 £m – 27.0 £m. Normalised (1 = best):
 *   North Wall     cost 1,     homes 0,     habitat 0
 *   Tidal Barrier  cost 0,     homes 1,     habitat 25/28
 *   Dune Nourish.  cost 15/23, homes 7/22,  habitat 1
 * Equal weights favour Dune Nourishment (0.657) over Tidal Barrier (0.631); all weight on Capital
 * cost favours North Wall.
 */
const criteria = [
  { id: 'cost', name: 'Capital cost', unit: '£m', direction: 'min', highest: 30, precision: 1, description: 'Construction cost at today\'s prices.' },
  { id: 'homes', name: 'Homes protected', unit: 'homes', direction: 'max', precision: 0 },
  { id: 'habitat', name: 'Habitat affected', unit: 'ha', direction: 'min', precision: 0 },
]
const alternatives = [
  { id: 'wall', name: 'North Wall', scores: { cost: 4, homes: 800, habitat: 30 } },
  { id: 'barrier', name: 'Tidal Barrier', scores: { cost: 27, homes: 3000, habitat: 5 } },
  { id: 'dunes', name: 'Dune Nourishment', scores: { cost: 12, homes: 1500, habitat: 2 } },
  { id: 'groynes', name: 'Groyne Field', scores: { cost: 20, homes: 1000, habitat: 10 } },
  { id: 'reef', name: 'Offshore Reef', scores: { cost: 40, homes: 4000, habitat: 1 } },
]

interface Setup {
  facilitator: APIRequestContext
  roomId: string
  stakeholderId: string
}

/** A facilitator (own request context) with a room and ledger; the page signs up as a stakeholder of it. */
async function roomWithStakeholder(page: Page, baseURL: string | undefined, title: string): Promise<Setup> {
  // One connection per request: the test pauses longer than the server keeps an idle connection open.
  const facilitator = await playwrightRequest.newContext({ baseURL, extraHTTPHeaders: { connection: 'close' } })
  expect((await facilitator.post('/api/auth/sign-up', { data: { displayName: 'Fen Facilitator', email: uniqueEmail('balance-facilitator'), password: 'a-long-enough-password' } })).status()).toBe(201)
  const room = await facilitator.post('/api/rooms', { data: { title, question: 'Which sea-front defence should the town build?' } })
  expect(room.status()).toBe(201)
  const { id: roomId } = await room.json()
  expect((await facilitator.put(`/api/rooms/${roomId}/ledger`, { data: { baseVersion: 0, criteria, alternatives } })).status()).toBe(201)

  const signUp = await page.request.post('/api/auth/sign-up', { data: { displayName: 'Sian Stakeholder', email: uniqueEmail('balance-stakeholder'), password: 'a-long-enough-password' } })
  expect(signUp.status()).toBe(201)
  const { id: stakeholderId } = await signUp.json()
  // No invitation step here: membership goes straight into the database, as in tests/server.
  await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, stakeholderId, 'stakeholder'])
  return { facilitator, roomId, stakeholderId }
}

async function openWeighing(setup: Setup, inputStyle: 'sliders' | 'ranking') {
  const opened = await setup.facilitator.post(`/api/rooms/${setup.roomId}/weighings`, { data: { inputStyle } })
  expect(opened.status()).toBe(201)
  return (await opened.json()).id as string
}

const percents = async (page: Page) => {
  const texts = await page.locator('[data-testid^="percent-"]').allTextContents()
  return texts.map(t => Number(t.replace('%', '').trim()))
}
const percentOf = async (page: Page, id: string) => Number((await page.getByTestId(`percent-${id}`).textContent())!.replace('%', '').trim())

async function submissionRows(weighingId: string, userId: string) {
  const { rows } = await testDb().query('select weights, ranking, revision, idempotency_key from submissions where weighing_id = $1 and user_id = $2', [weighingId, userId])
  return rows as { weights: number[], ranking: (string | string[])[] | null, revision: number, idempotency_key: string }[]
}

/** Centre of a range input's thumb at `value` (0–100), for a thumb `thumb` px wide. */
async function thumbPoint(slider: Locator, value: number, thumb = 32) {
  const box = (await slider.boundingBox())!
  return { x: box.x + thumb / 2 + ((box.width - thumb) * value) / 100, y: box.y + box.height / 2 }
}

test.describe('my balance on a phone', () => {
  test.beforeEach(({}, testInfo) => {
    test.skip(testInfo.project.name !== 'phone', 'stakeholders weigh from their phones')
  })

  test('a stakeholder drags, submits, reloads, and submits again offline without being counted twice', async ({ page, baseURL }) => {
    await page.setViewportSize({ width: 360, height: 740 })
    const setup = await roomWithStakeholder(page, baseURL, 'Sea-front defences')

    // Before any weighing: a calm waiting state, then the sliders arrive live when one opens.
    await page.goto(`/rooms/${setup.roomId}/balance`)
    await expect(page.getByTestId('connection')).toHaveText('Live')
    await expect(page.getByTestId('balance-idle')).toHaveText('No weighing is open. When the facilitator opens one, your sliders appear here.')
    const weighingId = await openWeighing(setup, 'sliders')
    await expect(page.getByTestId('weighing-line')).toContainText('Weighing 1 is open')

    const cost = page.getByTestId('criterion-cost')
    await expect(cost).toContainText('lower is better')
    await expect(cost).toContainText('4.0 £m – 27.0 £m among the shortlist')
    await expect(cost).toContainText('Construction cost at today\'s prices.')
    await expect(page.getByTestId('criterion-homes')).toContainText('higher is better')
    await expect(page.getByTestId('beam-favourite')).toHaveText('Dune Nourishment')
    await expect(page.getByTestId('beam-runner-up')).toHaveText('Tidal Barrier')
    expect(await percents(page)).toEqual([34, 33, 33])
    await expect(page.getByTestId('submit-state')).toHaveText('Not sent yet.')

    // Phone-sized: no sideways scrolling, sliders at least 44 px tall.
    expect(await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)).toBeLessThanOrEqual(0)
    const slider = page.getByTestId('slider-cost')
    expect((await slider.boundingBox())!.height).toBeGreaterThanOrEqual(44)

    // Drag Capital cost to the right with the pointer; the beam answers before the finger lifts.
    // (Centred, clear of the sticky beam above and the sticky Submit bar below.)
    await slider.evaluate(el => el.scrollIntoView({ block: 'center' }))
    const sliderBefore = (await slider.boundingBox())!
    const beamBefore = (await page.getByTestId('balance-beam-panel').boundingBox())!
    const start = await thumbPoint(slider, 33)
    const end = await thumbPoint(slider, 90)
    await page.mouse.move(start.x, start.y)
    await page.mouse.down()
    for (let step = 1; step <= 12; step++) await page.mouse.move(start.x + ((end.x - start.x) * step) / 12, start.y)
    await expect(page.getByTestId('beam-favourite')).toHaveText('North Wall')
    // Nothing moved under the finger while the figures and the beam changed.
    expect(await slider.boundingBox()).toEqual(sliderBefore)
    expect(await page.getByTestId('balance-beam-panel').boundingBox()).toEqual(beamBefore)
    await page.mouse.up()

    const afterDrag = await percents(page)
    expect(afterDrag.reduce((a, b) => a + b, 0)).toBe(100)
    expect(afterDrag[0]).toBeGreaterThanOrEqual(85)
    // The others kept their proportions (they were equal, so they still differ by at most 1).
    expect(Math.abs(afterDrag[1]! - afterDrag[2]!)).toBeLessThanOrEqual(1)
    await expect(page.getByTestId('stability')).toContainText('Your favourite stays the same while Capital cost is at least')
    await expect(page.getByTestId('stability')).toContainText('Dune Nourishment takes over')

    await page.getByTestId('submit').click()
    await expect(page.getByTestId('submit-state')).toHaveAttribute('data-state', 'confirmed')
    await expect(page.getByTestId('submit-state')).toContainText(/^Recorded \d\d:\d\d — you can change it until the weighing closes\.$/)
    await expect(page.getByTestId('submit')).toBeDisabled()
    let rows = await submissionRows(weighingId, setup.stakeholderId)
    expect(rows).toHaveLength(1)
    expect(rows[0]!.revision).toBe(1)
    expect(largestRemainderPercentages(rows[0]!.weights)).toEqual(afterDrag)

    // A reload restores the submission into the sliders.
    await page.reload()
    await expect(page.getByTestId('connection')).toHaveText('Live')
    expect(await percents(page)).toEqual(afterDrag)
    await expect(page.getByTestId('beam-favourite')).toHaveText('North Wall')
    await expect(page.getByTestId('submit-state')).toHaveAttribute('data-state', 'confirmed')

    // Keyboard: arrow keys move a slider by 1% each.
    const homes = page.getByTestId('slider-homes')
    const homesBefore = await percentOf(page, 'homes')
    await homes.focus()
    await page.keyboard.press('ArrowRight')
    await page.keyboard.press('ArrowRight')
    await expect(page.getByTestId('percent-homes')).toHaveText(`${homesBefore + 2}%`)
    await page.keyboard.press('ArrowLeft')
    await expect(page.getByTestId('percent-homes')).toHaveText(`${homesBefore + 1}%`)
    await expect(page.getByTestId('submit-state')).toHaveAttribute('data-state', 'changed')
    // A change not yet sent survives a reload too.
    const changed = await percents(page)
    await page.reload()
    await expect(page.getByTestId('connection')).toHaveText('Live')
    expect(await percents(page)).toEqual(changed)
    await expect(page.getByTestId('submit-state')).toHaveAttribute('data-state', 'changed')

    // Offline: the submission is kept and queued, not lost; it goes once the connection is back.
    await page.context().setOffline(true)
    await homes.focus()
    await page.keyboard.press('ArrowRight')
    await page.keyboard.press('ArrowRight')
    await expect(page.getByTestId('percent-homes')).toHaveText(`${homesBefore + 3}%`)
    const offlinePercents = await percents(page)
    expect(offlinePercents.reduce((a, b) => a + b, 0)).toBe(100)
    await page.getByTestId('submit').click()
    await expect(page.getByTestId('submit-state')).toHaveAttribute('data-state', 'queued')
    await expect(page.getByTestId('submit-state')).toContainText('you are offline')
    rows = await submissionRows(weighingId, setup.stakeholderId)
    expect(rows[0]!.revision).toBe(1)

    await page.context().setOffline(false)
    await expect(page.getByTestId('submit-state')).toHaveAttribute('data-state', 'confirmed', { timeout: 45_000 })
    rows = await submissionRows(weighingId, setup.stakeholderId)
    expect(rows).toHaveLength(1)
    expect(rows[0]!.revision).toBe(2)
    expect(largestRemainderPercentages(rows[0]!.weights)).toEqual(offlinePercents)
    const { rows: audit } = await testDb().query('select count(*)::int as n from audit_log where room_id = $1 and actor_id = $2 and action = $3', [setup.roomId, setup.stakeholderId, 'weights.submitted'])
    expect(audit[0].n).toBe(2)

    // Closing and revealing reach the phone live; the room's balance is the group's mean weights.
    expect((await setup.facilitator.post(`/api/rooms/${setup.roomId}/weighings/${weighingId}/close`)).status()).toBe(200)
    await expect(page.getByTestId('balance-closed')).toContainText('Weighing 1 is closed — results will be shown when the facilitator reveals them.')
    await expect(page.getByTestId('my-beam-favourite')).toHaveText('North Wall')
    expect((await setup.facilitator.post(`/api/rooms/${setup.roomId}/weighings/${weighingId}/reveal`)).status()).toBe(200)
    await expect(page.getByTestId('room-balance')).toContainText('The room\'s balance')
    await expect(page.getByTestId('room-beam-favourite')).toHaveText('North Wall')
    await setup.facilitator.dispose()
  })

  test('in a ranking weighing the stakeholder ranks with buttons, a tie and a drag, and submits the ranking', async ({ page, baseURL }) => {
    const setup = await roomWithStakeholder(page, baseURL, 'Sea-front ranking')
    const weighingId = await openWeighing(setup, 'ranking')
    await page.goto(`/rooms/${setup.roomId}/balance`)
    await expect(page.getByTestId('connection')).toHaveText('Live')
    const order = () => page.locator('[data-testid^="rank-"][data-rank-row]').evaluateAll(rows => rows.map(r => r.getAttribute('data-testid')!.replace('rank-', '')))
    expect(await order()).toEqual(['cost', 'homes', 'habitat'])
    // Rank-order centroid for three: 61%, 28%, 11%.
    expect(await percents(page)).toEqual([61, 28, 11])
    await expect(page.getByTestId('beam-favourite')).toHaveText('North Wall')

    // Keyboard: move Habitat affected up twice; focus stays on the moved row's button.
    await page.getByRole('button', { name: 'Move Habitat affected up' }).focus()
    await page.keyboard.press('Enter')
    await page.keyboard.press('Enter')
    expect(await order()).toEqual(['habitat', 'cost', 'homes'])
    await expect(page.getByTestId('beam-favourite')).toHaveText('Dune Nourishment')

    // A tie: Homes protected the same as Capital cost.
    await page.getByTestId('tie-homes').check()
    await expect(page.getByTestId('rank-number-homes')).toHaveText('Rank =2')
    expect(await percents(page)).toEqual([61, 20, 19])

    // Drag Capital cost (rank 2) above Habitat affected with the pointer: its tie is released.
    await page.getByTestId('ranking-list').evaluate(el => el.scrollIntoView({ block: 'center' }))
    const handle = page.getByTestId('handle-cost')
    const from = (await handle.boundingBox())!
    const target = (await page.getByTestId('rank-habitat').boundingBox())!
    await page.mouse.move(from.x + from.width / 2, from.y + from.height / 2)
    await page.mouse.down()
    for (let step = 1; step <= 8; step++) await page.mouse.move(from.x + from.width / 2, from.y + from.height / 2 + ((target.y + 4 - from.y - from.height / 2) * step) / 8)
    await page.mouse.up()
    expect(await order()).toEqual(['cost', 'habitat', 'homes'])
    await expect(page.getByTestId('tie-homes')).not.toBeChecked()

    await page.getByTestId('tie-homes').check()
    await page.getByTestId('submit').click()
    await expect(page.getByTestId('submit-state')).toHaveAttribute('data-state', 'confirmed')
    const rows = await submissionRows(weighingId, setup.stakeholderId)
    expect(rows).toHaveLength(1)
    expect(rows[0]!.ranking).toEqual(['cost', ['habitat', 'homes']])

    await page.reload()
    await expect(page.getByTestId('connection')).toHaveText('Live')
    expect(await order()).toEqual(['cost', 'habitat', 'homes'])
    await expect(page.getByTestId('tie-homes')).toBeChecked()
    await expect(page.getByTestId('submit-state')).toHaveAttribute('data-state', 'confirmed')
    await setup.facilitator.dispose()
  })
})

test('a facilitator who opens my balance is pointed back to the room', async ({ page }) => {
  const signUp = await page.request.post('/api/auth/sign-up', { data: { displayName: 'Fen Facilitator', email: uniqueEmail('balance-host'), password: 'a-long-enough-password' } })
  expect(signUp.status()).toBe(201)
  const room = await page.request.post('/api/rooms', { data: { title: 'Harbour lighting', question: 'Which lights?' } })
  const { id } = await room.json()
  await page.goto(`/rooms/${id}/balance`)
  const notice = page.getByTestId('balance-not-stakeholder')
  await expect(notice).toContainText('You are the facilitator in this room')
  await notice.getByRole('link', { name: 'Back to the room' }).click()
  await expect(page).toHaveURL(new RegExp(`/rooms/${id}$`))
})
