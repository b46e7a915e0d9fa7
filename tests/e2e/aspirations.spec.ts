import { randomUUID } from 'node:crypto'
import { request as playwrightRequest, type APIRequestContext, type Locator, type Page } from '@playwright/test'
import { io, type Socket } from 'socket.io-client'
import type { Ack, ClientToServerEvents, ServerToClientEvents } from '../../shared/types/realtime'
import { closeTestDb, testDb } from '../support/db'
import { expect, test, uniqueEmail } from './fixtures'
import { closePhones, member, roomWithLedger } from './people'

/**
 * Targets (reference-point mode) end to end. The sea-front ledger of weigh-console.spec.ts:
 * efficient North Wall (10 £m, 100 homes), Dune Nourishment (20 £m, 150), Tidal Barrier (30 £m,
 * 300). Normalised (1 = best) cost 1, 0.5, 0 and homes 0, 0.25, 1, so Dune Nourishment lies below
 * the chord and no slider weighting favours it. With a cost target of 20 £m (0.5), the largest
 * shortfalls for a homes target h (normalised r) are Wall r, Dunes max(0, r − 0.25), Barrier 0.5:
 * Dune Nourishment is closest for 100 < h < 250 homes, Tidal Barrier above 250 (worked by hand).
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

/** Centre of a range input's thumb at `share` (0–1 of its range), for a thumb `thumb` px wide. */
async function thumbPoint(slider: Locator, share: number, thumb = 32) {
  const box = (await slider.boundingBox())!
  return { x: box.x + thumb / 2 + (box.width - thumb) * share, y: box.y + box.height / 2 }
}
async function drag(page: Page, slider: Locator, from: number, to: number) {
  await slider.evaluate(el => el.scrollIntoView({ block: 'center' }))
  const start = await thumbPoint(slider, from)
  const end = await thumbPoint(slider, to)
  await page.mouse.move(start.x, start.y)
  await page.mouse.down()
  for (let step = 1; step <= 10; step++) await page.mouse.move(start.x + ((end.x - start.x) * step) / 10, start.y)
  await page.mouse.up()
}
/** The number in "at least 170 homes" / "at most 20.0 £m". */
const levelOf = async (page: Page, id: string) => Number((await page.getByTestId(`target-words-${id}`).textContent())!.replace(/[^\d.]/g, ''))

test('a stakeholder sets targets on a phone and finds the alternative no slider weighting picks', async ({ page, baseURL }, testInfo) => {
  test.skip(testInfo.project.name !== 'phone', 'stakeholders set their targets from their phones')
  test.setTimeout(90_000)
  await page.setViewportSize({ width: 360, height: 740 })
  const facilitator: APIRequestContext = await playwrightRequest.newContext({ baseURL, extraHTTPHeaders: { connection: 'close' } })
  expect((await facilitator.post('/api/auth/sign-up', { data: { displayName: 'Tam Facilitator', email: uniqueEmail('targets-facilitator'), password: 'a-long-enough-password' } })).status()).toBe(201)
  const { id: roomId } = await (await facilitator.post('/api/rooms', { data: { title: 'Sea-front targets', question: 'Which defence?' } })).json()
  expect((await facilitator.put(`/api/rooms/${roomId}/ledger`, { data: { baseVersion: 0, criteria, alternatives } })).status()).toBe(201)
  const signUp = await page.request.post('/api/auth/sign-up', { data: { displayName: 'Tova Stakeholder', email: uniqueEmail('targets-stakeholder'), password: 'a-long-enough-password' } })
  const { id: stakeholderId } = await signUp.json()
  await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, stakeholderId, 'stakeholder'])
  const opened = await facilitator.post(`/api/rooms/${roomId}/weighings`, { data: { inputStyle: 'aspirations' } })
  expect(opened.status()).toBe(201)
  const { id: weighingId } = await opened.json()

  await page.goto(`/rooms/${roomId}/balance`)
  await expect(page.getByTestId('connection')).toHaveText('Live')
  await expect(page.getByTestId('weighing-line')).toContainText('Set a target for each criterion')
  const cost = page.getByTestId('target-cost')
  await expect(cost).toContainText('lower is better · 10.0 £m – 30.0 £m among the shortlist')
  await expect(page.getByTestId('target-homes')).toContainText('higher is better · 100 homes – 300 homes among the shortlist')
  // The sliders start mid-shortlist.
  await expect(page.getByTestId('target-words-cost')).toHaveText('at most 20.0 £m')
  await expect(page.getByTestId('target-words-homes')).toHaveText('at least 200 homes')
  expect((await page.getByTestId('target-slider-homes').boundingBox())!.height).toBeGreaterThanOrEqual(44)
  expect(await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)).toBeLessThanOrEqual(0)

  // Ask for every home the shortlist can protect: Tidal Barrier is closest, a supported choice.
  await drag(page, page.getByTestId('target-slider-homes'), 0.5, 1)
  await expect(page.getByTestId('target-words-homes')).toHaveText('at least 300 homes')
  await expect(page.getByTestId('beam-favourite')).toHaveText('Tidal Barrier')
  await expect(page.getByTestId('stability')).toContainText('Tidal Barrier is closest to your targets.')
  await expect(page.getByTestId('stability')).not.toHaveAttribute('data-unsupported', 'true')

  // Settle for fewer homes at the same cost: Dune Nourishment, which sliders never pick.
  await drag(page, page.getByTestId('target-slider-homes'), 1, 0.35)
  const homes = await levelOf(page, 'homes')
  expect(homes).toBeGreaterThanOrEqual(150)
  expect(homes).toBeLessThanOrEqual(190)
  await expect(page.getByTestId('beam-favourite')).toHaveText('Dune Nourishment')
  await expect(page.getByTestId('stability')).toContainText('No slider weighting can pick Dune Nourishment; your targets can.')
  await expect(page.getByTestId('stability')).toHaveAttribute('data-unsupported', 'true')

  // Drag the cost target up a little too: at about 22 £m and 170 homes (0.4, 0.35) the largest
  // shortfalls are Wall 0.35, Dunes 0.1, Barrier 0.4, so Dune Nourishment stays closest.
  await drag(page, page.getByTestId('target-slider-cost'), 0.5, 0.6)
  const costLevel = await levelOf(page, 'cost')
  expect(costLevel).toBeGreaterThan(20)
  expect(costLevel).toBeLessThan(25)
  await expect(page.getByTestId('beam-favourite')).toHaveText('Dune Nourishment')

  await page.getByTestId('submit').click()
  await expect(page.getByTestId('submit-state')).toHaveAttribute('data-state', 'confirmed')
  await expect(page.getByTestId('submit-state')).toContainText(/^Recorded \d\d:\d\d — you can change it until the weighing closes\.$/)
  const { rows } = await testDb().query('select aspirations, weights, revision from submissions where weighing_id = $1 and user_id = $2', [weighingId, stakeholderId])
  expect(rows).toEqual([{ aspirations: [costLevel, homes], weights: [0.5, 0.5], revision: 1 }])

  // A reload brings the targets back, still recorded.
  await page.reload()
  await expect(page.getByTestId('connection')).toHaveText('Live')
  expect(await levelOf(page, 'homes')).toBe(homes)
  expect(await levelOf(page, 'cost')).toBe(costLevel)
  await expect(page.getByTestId('submit-state')).toHaveAttribute('data-state', 'confirmed')
  await facilitator.dispose()
})

type RoomSocket = Socket<ServerToClientEvents, ClientToServerEvents>
const emitAck = <T>(socket: RoomSocket, event: string, body: unknown) => new Promise<Ack<T>>(resolve => (socket.emit as (...args: unknown[]) => void)(event, body, resolve))
async function aim(baseURL: string, cookie: string, roomId: string, weighingId: string, aspirations: number[]) {
  const socket: RoomSocket = io(baseURL, { extraHeaders: { cookie }, transports: ['websocket'], reconnection: false, forceNew: true })
  await new Promise<void>((resolve, reject) => {
    socket.once('connect', () => resolve())
    socket.once('connect_error', reject)
  })
  expect(await emitAck(socket, 'room:join', { roomId })).toMatchObject({ ok: true })
  const answer = await emitAck(socket, 'weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), aspirations })
  socket.disconnect()
  return answer
}

test('the console shows each stakeholder\'s targets with units and the group\'s median targets', async ({ page, baseURL }, testInfo) => {
  test.skip(testInfo.project.name !== 'desktop', 'the facilitator works at a desktop')
  test.setTimeout(90_000)
  const roomId = await roomWithLedger(page, 'Sea-front targets console', { criteria, alternatives })
  const ada = await member(baseURL!, roomId, 'Ada Aimer', 'stakeholder')
  const bo = await member(baseURL!, roomId, 'Bo Aimer', 'stakeholder')
  const cy = await member(baseURL!, roomId, 'Cy Aimer', 'stakeholder')

  await page.goto(`/rooms/${roomId}?tab=weigh`)
  const tab = page.getByTestId('weigh-console')
  await tab.getByRole('radio', { name: /Targets/ }).check()
  await tab.getByRole('button', { name: 'Open weighing 1' }).click()
  await expect(tab.getByTestId('weighing-status')).toHaveText('Weighing 1 is open')
  const { id: weighingId } = (await (await page.request.get(`/api/rooms/${roomId}/weighings`)).json())[0]

  expect(await aim(baseURL!, ada.cookie, roomId, weighingId, [20, 150])).toMatchObject({ ok: true })
  expect(await aim(baseURL!, bo.cookie, roomId, weighingId, [12, 120])).toMatchObject({ ok: true })
  expect(await aim(baseURL!, cy.cookie, roomId, weighingId, [22, 160])).toMatchObject({ ok: true })
  expect((await page.request.post(`/api/rooms/${roomId}/weighings/${weighingId}/close`)).status()).toBe(200)
  expect((await page.request.post(`/api/rooms/${roomId}/weighings/${weighingId}/reveal`)).status()).toBe(200)

  await page.goto(`/rooms/${roomId}?tab=weigh`)
  const results = page.getByTestId('weighing-results')
  await expect(results.getByRole('heading', { name: 'Results of weighing 1' })).toBeVisible()
  await expect(results).toContainText('· targets ·')
  // Anonymous rows come in a keyed order, not that of submission, so each is found by its targets:
  // Ada (20, 150) → Dunes; Bo (12, 120) → Wall; Cy (22, 160) → Dunes.
  const rows = results.getByTestId('weighting-row')
  await expect(rows).toHaveCount(3)
  const adaRow = rows.filter({ hasText: 'at most 20.0 £m' })
  await expect(adaRow).toHaveCount(1)
  await expect(adaRow.locator('td').nth(2)).toHaveText('at most 20.0 £m')
  await expect(adaRow.locator('td').nth(3)).toHaveText('at least 150 homes')
  await expect(adaRow.locator('td').nth(0)).toHaveAttribute('data-flag', 'unsupported')
  await expect(adaRow.locator('td').nth(0)).toContainText('no slider weighting picks this; these targets do')
  const boRow = rows.filter({ hasText: 'at most 12.0 £m' })
  await expect(boRow).toHaveCount(1)
  await expect(boRow.locator('td').nth(0)).toHaveText('North Wall')

  const group = results.getByTestId('group-targets')
  await expect(group.getByTestId('group-favourite')).toHaveText('Dune Nourishment')
  await expect(group.getByTestId('agreement')).toHaveText('2 of 3 weightings favour the group\'s choice.')
  await expect(group.getByTestId('group-unsupported-note')).toContainText('No slider weighting can pick Dune Nourishment')
  await expect(group).toContainText('at most 20.0 £m')
  await expect(group).toContainText('at least 150 homes')
  await expect(results.getByTestId('group-weighting')).toHaveCount(0)
})
