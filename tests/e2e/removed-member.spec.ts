import { closeTestDb, testDb } from '../support/db'
import { expect, test, uniqueEmail } from './fixtures'
import { closePhones, member, PASSWORD, roomWithLedger } from './people'

/**
 * A member removed while their room page is open: the page's live join is refused, and it shows
 * only the refusal (with a way back to My rooms), no longer the room's live counts.
 */
const criteria = [
  { id: 'cost', name: 'Running cost', unit: '£k a year', direction: 'min' },
  { id: 'seats', name: 'Seats', unit: 'seats', direction: 'max' },
]
const alternatives = [
  { id: 'hall', name: 'Village Hall', scores: { cost: 12, seats: 120 } },
  { id: 'barn', name: 'Old Barn', scores: { cost: 8, seats: 60 } },
  { id: 'school', name: 'School Annexe', scores: { cost: 20, seats: 200 } },
]
test.afterAll(async () => {
  closePhones()
  await closeTestDb()
})

test('a member removed while the room page is open sees only the refusal, not the live counts', async ({ page, browser, baseURL }, testInfo) => {
  test.skip(testInfo.project.name !== 'desktop', 'the facilitator works at a desktop; the removed member has their own context')
  test.setTimeout(90_000)
  const roomId = await roomWithLedger(page, 'Meeting-place choice', { criteria, alternatives }, 'Where should the club meet?')
  await member(baseURL!, roomId, 'Tamsin Staying', 'stakeholder')

  // The member to be removed, in a browser of their own, with the Weighings tab open.
  const theirs = await browser.newContext({ baseURL })
  const leaving = await theirs.newPage()
  const signUp = await leaving.request.post('/api/auth/sign-up', { data: { displayName: 'Rhodri Leaving', email: uniqueEmail('leaving'), password: PASSWORD } })
  expect(signUp.status()).toBe(201)
  const leavingId = (await signUp.json()).id as string
  await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, leavingId, 'stakeholder'])
  expect((await page.request.post(`/api/rooms/${roomId}/weighings`, { data: { inputStyle: 'sliders' } })).status()).toBe(201)

  await leaving.goto(`/rooms/${roomId}?tab=weigh`)
  const theirConsole = leaving.getByTestId('weigh-console')
  await expect(theirConsole.getByTestId('connection')).toHaveText('Live')
  await expect(theirConsole.getByTestId('weighed-count')).toHaveText('0 of 2 stakeholders have weighed')
  await expect(leaving.getByTestId('room-refused')).toHaveCount(0)

  // The facilitator removes them from the People tab.
  await page.goto(`/rooms/${roomId}?tab=people`)
  await page.getByTestId('member-list').getByRole('button', { name: 'Remove Rhodri Leaving from the room' }).click()
  await page.getByRole('dialog', { name: /^Remove / }).getByRole('button', { name: 'Yes, remove' }).click()
  await expect(page.getByTestId('people-notice')).toHaveText('Rhodri Leaving was removed from the room.')

  // Their page: only the refusal, in the server's words, and the way back.
  const refused = leaving.getByTestId('room-refused')
  await expect(refused).toBeVisible()
  await expect(refused.getByRole('heading')).toHaveText('You are not in this room any more')
  await expect(refused).toContainText('No such room, or you are not a member of it.')
  await expect(leaving.getByTestId('weigh-console')).toHaveCount(0)
  await expect(leaving.getByTestId('weighed-count')).toHaveCount(0)
  await expect(leaving.getByTestId('room-title')).toHaveCount(0)
  await expect(leaving).toHaveTitle(/^Not in this room/)
  await expect(leaving.getByText('Where should the club meet?')).toHaveCount(0)
  await refused.getByRole('link', { name: 'Back to my rooms' }).click()
  await expect(leaving).toHaveURL(/\/rooms$/)
  await expect(leaving.getByText('You are not in any room yet.')).toBeVisible()

  // The room itself counts one stakeholder fewer.
  await page.goto(`/rooms/${roomId}?tab=weigh`)
  await expect(page.getByTestId('weigh-console').getByTestId('weighed-count')).toHaveText(/^0 of 1 stakeholder /)
  await theirs.close()
})
