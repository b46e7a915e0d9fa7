import { request as apiRequest, type Page } from '@playwright/test'
import { closeTestDb, testDb } from '../support/db'
import { expect, test, uniqueEmail } from './fixtures'
import { account, closePhones, cookieOf, member, PASSWORD, roomWithLedger as roomWith, weigh } from './people'

/**
 * The sea-front ledger: 6 alternatives, 1 outside limits (Offshore Reef), 1 dominated, 1 weakly
 * efficient only, 3 efficient (North Wall, Dune Nourishment, Tidal Barrier). Normalised over the
 * efficient set, cost gives Wall 1, Dunes 0.5, Barrier 0 and homes Wall 0, Dunes 0.25, Barrier 1,
 * so Dune Nourishment lies below the chord: no weighting of sliders can favour it.
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
test.afterAll(async () => {
  closePhones()
  await closeTestDb()
})

const roomWithLedger = (page: Page, title: string) => roomWith(page, title, { criteria, alternatives })

async function openWeighingId(page: Page, roomId: string) {
  const list = await (await page.request.get(`/api/rooms/${roomId}/weighings`)).json()
  expect(list[0].status).toBe('open')
  return list[0].id as string
}

test('the facilitator runs two weighings from the console while the gallery follows the narrowing', async ({ page, browser, baseURL }, testInfo) => {
  test.skip(testInfo.project.name !== 'desktop', 'the facilitator works at a desktop; the gallery opens its own projector-sized context')
  test.setTimeout(150_000)
  const roomId = await roomWithLedger(page, 'Sea-front defences')
  const ada = await member(baseURL!, roomId, 'Ada Weigher', 'stakeholder')
  const ben = await member(baseURL!, roomId, 'Ben Weigher', 'stakeholder')
  const cai = await member(baseURL!, roomId, 'Cai Weigher', 'stakeholder')
  const dee = await member(baseURL!, roomId, 'Dee Weigher', 'stakeholder')

  // The projector: an observer's screen at 1080p.
  const projector = await browser.newContext({ baseURL, viewport: { width: 1920, height: 1080 } })
  const gallery = await projector.newPage()
  const observer = await gallery.request.post('/api/auth/sign-up', { data: { displayName: 'Orla Watcher', email: uniqueEmail('observer'), password: PASSWORD } })
  expect(observer.status()).toBe(201)
  await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, (await observer.json()).id, 'observer'])
  await gallery.goto(`/rooms/${roomId}/gallery`)
  await expect(gallery.getByTestId('gallery-title')).toHaveText('Sea-front defences')
  const stage = (key: string) => gallery.getByTestId(`narrowing-${key}`)
  await expect(stage('all')).toHaveAttribute('data-count', '6')
  await expect(stage('within-limits')).toHaveAttribute('data-count', '5')
  await expect(stage('efficient')).toHaveAttribute('data-count', '3')
  await expect(stage('efficient').getByTestId('narrowing-count')).toHaveText('3')
  // The survivors are named; Dune Nourishment carries the unsupported diamond.
  await expect(stage('efficient').getByTestId('narrowing-names').getByRole('listitem')).toHaveText(['North Wall', /Dune Nourishment/, 'Tidal Barrier'])
  await expect(stage('efficient').getByRole('listitem').filter({ hasText: 'Dune Nourishment' }).locator('[data-status="unsupported"] svg')).toBeVisible()
  await expect(stage('within-limits').getByTestId('narrowing-set-aside')).toHaveText('− 1 outside limits')
  await expect(stage('efficient').getByTestId('narrowing-set-aside')).toHaveText('− 2 dominated or only weakly efficient')
  await expect(stage('favoured')).toHaveAttribute('data-count', '')
  await expect(stage('favoured')).toContainText('After the first weighing is revealed.')
  // Nothing is chosen yet, so there is no chosen stage (and no invented one).
  await expect(stage('chosen')).toHaveCount(0)
  await expect(gallery.getByTestId('gallery-weighing')).toContainText('Waiting for the first weighing.')
  await expect(gallery.getByTestId('gallery-connection')).toHaveAttribute('data-state', 'connected')
  // Dark by default; the light theme is one press away, and back.
  await expect(gallery.getByTestId('gallery')).toHaveAttribute('data-theme', 'dark')
  await gallery.getByTestId('gallery-theme').click()
  await expect(gallery.getByTestId('gallery')).toHaveAttribute('data-theme', 'light')
  await expect(gallery.getByTestId('gallery-theme')).toHaveAttribute('aria-pressed', 'true')
  await gallery.getByTestId('gallery-theme').click()
  await expect(gallery.getByTestId('gallery')).toHaveAttribute('data-theme', 'dark')

  // Weighing 1: sliders, names shown, ten minutes.
  await page.goto(`/rooms/${roomId}?tab=weigh`)
  const tab = page.getByTestId('weigh-console')
  await expect(tab.getByTestId('connection')).toHaveText('Live')
  await tab.getByLabel('Show names').check()
  await tab.getByLabel('Set a time limit').check()
  await tab.getByLabel('Time limit in minutes').fill('10')
  await tab.getByRole('button', { name: 'Open weighing 1' }).click()
  await expect(tab.getByTestId('weighing-status')).toHaveText('Weighing 1 is open')
  await expect(tab.getByTestId('weighed-count')).toHaveText('0 of 4 stakeholders have weighed')
  await expect(tab.getByTestId('weighed-names')).toHaveText('Nobody has weighed yet.')
  await expect(tab.getByTestId('countdown')).toHaveText(/^(10:00|9:\d\d) left$/)
  await expect(gallery.getByTestId('gallery-weighed')).toHaveText('0 of 4 have weighed')
  const first = await openWeighingId(page, roomId)

  expect(await weigh(baseURL!, ada, roomId, first, [0.8, 0.2])).toMatchObject({ ok: true })
  await expect(tab.getByTestId('weighed-count')).toHaveText('1 of 4 stakeholders has weighed')
  await expect(tab.getByTestId('weighed-names')).toHaveText(/Ada Weigher/)
  await expect(gallery.getByTestId('gallery-weighed')).toHaveText('1 of 4 has weighed')
  expect(await weigh(baseURL!, ben, roomId, first, [0.7, 0.3])).toMatchObject({ ok: true })
  expect(await weigh(baseURL!, cai, roomId, first, [0.2, 0.8])).toMatchObject({ ok: true })
  await expect(tab.getByTestId('weighed-count')).toHaveText('3 of 4 stakeholders have weighed')
  await expect(tab.getByTestId('weighed-names').getByRole('listitem')).toHaveText([/Ada Weigher/, /Ben Weigher/, /Cai Weigher/])
  await expect(gallery.getByTestId('gallery-weighed')).toHaveText('3 of 4 have weighed')
  // Names only: no weights before the reveal.
  await expect(tab).not.toContainText('80%')

  // Closing with one stakeholder missing asks first; "Keep it open" changes nothing.
  await tab.getByRole('button', { name: 'Close weighing 1' }).click()
  const confirm = page.getByTestId('confirm-close')
  await expect(confirm).toBeVisible()
  await expect(confirm).toContainText('Only 3 of 4 stakeholders have weighed.')
  await confirm.getByRole('button', { name: 'Keep it open' }).click()
  await expect(confirm).toBeHidden()
  await expect(tab.getByTestId('weighing-status')).toHaveText('Weighing 1 is open')
  await tab.getByRole('button', { name: 'Close weighing 1' }).click()
  await confirm.getByRole('button', { name: 'Close weighing 1' }).click()
  await expect(tab.getByTestId('weighing-status')).toHaveText('Weighing 1 is closed')
  await expect(gallery.getByTestId('gallery-closed')).toHaveText('Weighing 1 is closed. The results follow.')
  // Closed means closed: a late phone is refused.
  expect(await weigh(baseURL!, dee, roomId, first, [0.5, 0.5])).toMatchObject({ ok: false, status: 409 })

  await tab.getByRole('button', { name: 'Reveal the results to the room' }).click()
  const results = tab.getByTestId('weighing-results')
  await expect(results.getByRole('heading', { name: 'Results of weighing 1' })).toBeVisible()
  await expect(results.getByTestId('group-favourite')).toHaveText('North Wall')
  await expect(results.getByTestId('group-runner-up')).toHaveText('Tidal Barrier')
  await expect(results.getByTestId('agreement')).toHaveText('2 of 3 weightings favour the group\'s choice.')
  await expect(results.getByTestId('dispersion')).toContainText('would have to move to match the group\'s')
  const rows = results.getByTestId('weighting-row')
  await expect(rows).toHaveCount(3)
  await expect(rows.filter({ hasText: 'Ada Weigher' })).toContainText('North Wall')
  await expect(rows.filter({ hasText: 'Ada Weigher' }).locator('td')).toHaveText(['North Wall', 'Dune Nourishment', '80%', '20%'])
  await expect(rows.filter({ hasText: 'Cai Weigher' }).locator('td').first()).toHaveText('Tidal Barrier')
  const favoured = results.getByTestId('favoured-row')
  await expect(favoured.locator('th')).toHaveText(['North Wall', 'Tidal Barrier', 'Dune Nourishment'])
  await expect(favoured.filter({ hasText: 'North Wall' })).toContainText('2 weightings')
  await expect(favoured.filter({ hasText: 'Dune Nourishment' })).toHaveAttribute('data-flag', 'unsupported')
  await expect(favoured.filter({ hasText: 'Dune Nourishment' })).toContainText('No slider weighting can favour this')
  await expect(favoured.filter({ hasText: 'Dune Nourishment' }).locator('[data-status="unsupported"] svg')).toBeVisible()
  await expect(results.getByTestId('favoured-chart').locator('svg.apexcharts-svg')).toBeVisible()
  // The other rules are there, each labelled for what it can do to unanimity.
  await results.getByLabel(/Median/).check()
  await expect(results.getByTestId('group-weighting')).toContainText('The median can break unanimity')
  await expect(results.getByTestId('group-favourite')).toHaveText('North Wall')
  await results.getByLabel(/Mean/).first().check()

  // The gallery narrows to the favoured alternatives and shows the room's beam.
  await expect(stage('favoured')).toHaveAttribute('data-count', '2')
  await expect(stage('favoured').getByTestId('narrowing-names').getByRole('listitem')).toHaveText(['North Wall', 'Tidal Barrier'])
  await expect(stage('favoured')).toContainText('Weighing 1')
  await expect(stage('favoured').getByTestId('narrowing-set-aside')).toHaveText('− 1 favoured by no weighting')
  const beam = gallery.getByTestId('gallery-beam')
  await expect(beam.getByTestId('beam-favourite')).toHaveText('North Wall')
  await expect(beam.getByTestId('beam-runner-up')).toHaveText('Tidal Barrier')
  await expect(gallery.getByTestId('gallery-agreement')).toHaveText('2 of 3 weightings favour the group\'s choice')

  // Weighing 2: anonymous, no time limit; one stakeholder weighs, and the rounds can be compared.
  await tab.getByLabel('Anonymous').check()
  await tab.getByLabel('Set a time limit').uncheck()
  await tab.getByRole('button', { name: 'Open weighing 2' }).click()
  await expect(tab.getByTestId('weighing-status')).toHaveText('Weighing 2 is open')
  await expect(tab.getByTestId('countdown')).toHaveCount(0)
  await expect(gallery.getByTestId('gallery-weighed')).toHaveText('0 of 4 have weighed')
  const second = await openWeighingId(page, roomId)
  expect(await weigh(baseURL!, dee, roomId, second, [0.1, 0.9])).toMatchObject({ ok: true })
  await expect(tab.getByTestId('weighed-names')).toHaveText(/Dee Weigher/)
  await expect(gallery.getByTestId('gallery-weighed')).toHaveText('1 of 4 has weighed')
  await tab.getByRole('button', { name: 'Close weighing 2' }).click()
  await confirm.getByRole('button', { name: 'Close weighing 2' }).click()
  await tab.getByRole('button', { name: 'Reveal the results to the room' }).click()
  await expect(results.getByRole('heading', { name: 'Results of weighing 2' })).toBeVisible()
  await expect(rows).toHaveCount(1)
  await expect(rows.locator('th')).toHaveText('Stakeholder 1')
  await expect(results.getByTestId('group-favourite')).toHaveText('Tidal Barrier')
  await expect(results.getByTestId('comparison')).toHaveText('In weighing 1 the group favoured North Wall (2 of 3 agreeing); now Tidal Barrier (1 of 1).')
  await expect(beam.getByTestId('beam-favourite')).toHaveText('Tidal Barrier')
  await expect(stage('favoured')).toHaveAttribute('data-count', '1')
  await expect(stage('favoured')).toContainText('Weighing 2')

  // The history brings back the first round.
  const history = tab.getByTestId('weighing-history')
  await expect(history.getByTestId('history-row')).toHaveCount(2)
  await history.getByRole('button', { name: 'Show weighing 1' }).click()
  await expect(results.getByRole('heading', { name: 'Results of weighing 1' })).toBeVisible()
  await expect(results.getByTestId('group-favourite')).toHaveText('North Wall')
  await expect(history.getByRole('button', { name: 'Showing weighing 1' })).toHaveAttribute('aria-pressed', 'true')
  await projector.close()
})

test('a stakeholder reads revealed results on a phone, without the facilitator\'s controls', async ({ page, baseURL }, testInfo) => {
  test.skip(testInfo.project.name !== 'phone', 'stakeholders read results on their phones')
  const { cookie } = await account(baseURL!, 'Morag Facilitator')
  const facilitator = await apiRequest.newContext({ baseURL, extraHTTPHeaders: { cookie } })
  try {
    const { id: roomId } = await (await facilitator.post('/api/rooms', { data: { title: 'Harbour defences', question: 'Which defence first?' } })).json()
    expect((await facilitator.put(`/api/rooms/${roomId}/ledger`, { data: { baseVersion: 0, criteria, alternatives } })).status()).toBe(201)
    const signUp = await page.request.post('/api/auth/sign-up', { data: { displayName: 'Pip Phone', email: uniqueEmail('phone'), password: PASSWORD } })
    expect(signUp.status()).toBe(201)
    const me = { cookie: cookieOf(signUp.headersArray()) }
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, (await signUp.json()).id, 'stakeholder'])
    const other = await member(baseURL!, roomId, 'Quin Other', 'stakeholder')

    const opened = await facilitator.post(`/api/rooms/${roomId}/weighings`, { data: { inputStyle: 'sliders', showNames: false } })
    expect(opened.status()).toBe(201)
    const { id: weighingId } = await opened.json()
    await page.goto(`/rooms/${roomId}?tab=weigh`)
    const tab = page.getByTestId('weigh-console')
    await expect(tab.getByTestId('weighing-status')).toHaveText('Weighing 1 is open')
    await expect(tab.getByTestId('connection')).toHaveText('Live')
    expect(await weigh(baseURL!, me, roomId, weighingId, [0.2, 0.8])).toMatchObject({ ok: true })
    await expect(tab.getByTestId('weighed-count')).toHaveText('1 of 2 stakeholders has weighed')
    // Who has weighed is for the facilitator only.
    await expect(tab.getByTestId('weighed-names')).toHaveCount(0)
    expect(await weigh(baseURL!, other, roomId, weighingId, [0.9, 0.1])).toMatchObject({ ok: true })
    await expect(tab.getByTestId('weighed-count')).toHaveText('2 of 2 stakeholders have weighed')
    await expect(tab.getByRole('button', { name: /Close weighing|Reveal/ })).toHaveCount(0)

    expect((await facilitator.post(`/api/rooms/${roomId}/weighings/${weighingId}/close`)).status()).toBe(200)
    await expect(tab).toContainText('The facilitator will reveal the results.')
    expect((await facilitator.post(`/api/rooms/${roomId}/weighings/${weighingId}/reveal`)).status()).toBe(200)
    // The reveal reaches the phone over the socket; no reload.
    const results = tab.getByTestId('weighing-results')
    await expect(results.getByRole('heading', { name: 'Results of weighing 1' })).toBeVisible()
    await expect(results.getByTestId('weighting-row').locator('th')).toHaveText(['Stakeholder 1', 'Stakeholder 2'])
    await expect(results.getByTestId('agreement')).toContainText('of 2 weightings')
    await expect(tab.getByRole('button', { name: /Open weighing/ })).toHaveCount(0)
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)
    expect(overflow).toBeLessThanOrEqual(0)
  }
  finally {
    await facilitator.dispose()
  }
})
