import { expect, test, uniqueEmail } from './fixtures'
import { PASSWORD } from './people'

/**
 * The development mail viewer (/dev/mail): npm test starts the local mail catcher and sets
 * COUNTERPOISE_DEV_MAIL=1, so an invitation the app sends shows up there, subject first.
 */
test('the caught-mail page shows an invitation the app has just sent', async ({ page }, testInfo) => {
  test.skip(testInfo.project.name !== 'desktop', 'a developer\'s page; one run is enough')
  // A title no other test uses, so the message found is this test's.
  const title = `Lifeboat station move ${Math.random().toString(36).slice(2, 8)}`
  const signUp = await page.request.post('/api/auth/sign-up', { data: { displayName: 'Elin Sender', email: uniqueEmail('dev-mail'), password: PASSWORD } })
  expect(signUp.status()).toBe(201)
  const room = await page.request.post('/api/rooms', { data: { title, question: 'Where should the lifeboat station go?' } })
  expect(room.status()).toBe(201)
  const { id } = await room.json()
  const invitee = uniqueEmail('dev-mail-invitee')
  const invited = await page.request.post(`/api/rooms/${id}/invitations`, { data: { email: invitee, role: 'stakeholder' } })
  expect(invited.status()).toBe(201)

  await page.goto('/dev/mail')
  await expect(page.getByRole('heading', { name: 'Caught mail', level: 1 })).toBeVisible()
  const message = page.getByTestId('caught-mail').getByRole('listitem').filter({ hasText: `To ${invitee}` })
  await expect(message).toHaveCount(1)
  await expect(message.getByRole('heading', { level: 2 })).toHaveText(`Elin Sender invited you to “${title}” on Counterpoise`)
  // The invitation link in the text is a link that can be followed.
  await expect(message.getByRole('link', { name: /\/invitations\// })).toBeVisible()
})
