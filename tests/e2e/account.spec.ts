import { expect, test, uniqueEmail } from './fixtures'
import { PASSWORD } from './people'

test('changing the password on one device signs the other device out, live page included', async ({ page, browser, baseURL }) => {
  // The laptop: a new account with a room.
  const email = uniqueEmail('password-change')
  expect((await page.request.post('/api/auth/sign-up', { data: { displayName: 'Idris Account', email, password: PASSWORD } })).status()).toBe(201)
  const room = await page.request.post('/api/rooms', { data: { title: 'Password room', question: 'Which plan?' } })
  const { id: roomId } = await room.json()

  // The phone: the same account, its own session, on the room page (live connection).
  const phoneContext = await browser.newContext({ baseURL, viewport: { width: 360, height: 740 } })
  const phone = await phoneContext.newPage()
  await phone.goto('/sign-in')
  await phone.getByLabel('E-mail address').fill(email)
  await phone.getByLabel('Password').fill(PASSWORD)
  await phone.getByRole('button', { name: 'Sign in' }).click()
  await expect(phone).toHaveURL(/\/rooms$/)
  await phone.goto(`/rooms/${roomId}?tab=weigh`)
  await expect(phone.getByTestId('room-title')).toHaveText('Password room')
  await expect(phone.getByTestId('connection')).toContainText('Live')

  await page.goto('/rooms')
  await page.getByTestId('account-link').click()
  await expect(page.getByRole('heading', { name: 'Your account' })).toBeVisible()
  await expect(page.getByText(email)).toBeVisible()
  // A wrong current password changes nothing and says which field.
  await page.getByLabel('Current password').fill('not-my-password')
  await page.getByLabel('New password').fill('a-new-and-longer-password')
  await page.getByRole('button', { name: 'Change password' }).click()
  await expect(page.getByText('The current password is not right.').first()).toBeVisible()
  await page.getByLabel('Current password').fill(PASSWORD)
  await page.getByRole('button', { name: 'Change password' }).click()
  await expect(page.getByTestId('password-changed')).toBeVisible()
  // The phone's open page loses its live connection and says so, without a reload.
  await expect(phone.getByTestId('connection')).toContainText('Signed out: sign in again', { timeout: 15_000 })

  // The laptop stays signed in.
  await page.goto('/rooms')
  await expect(page.getByTestId('room-list')).toContainText('Password room')
  // The phone's next page load finds itself signed out.
  await phone.goto(`/rooms/${roomId}`)
  await expect(phone).toHaveURL(url => url.pathname === '/sign-in' && url.searchParams.get('redirect') === `/rooms/${roomId}`)
  // And only the new password signs in.
  await phone.getByLabel('E-mail address').fill(email)
  await phone.getByLabel('Password').fill(PASSWORD)
  await phone.getByRole('button', { name: 'Sign in' }).click()
  await expect(phone.getByTestId('form-error')).toHaveText('Wrong e-mail address or password.')
  await phone.getByLabel('Password').fill('a-new-and-longer-password')
  await phone.getByRole('button', { name: 'Sign in' }).click()
  // Back where the phone was.
  await expect(phone).toHaveURL(new RegExp(`/rooms/${roomId}$`))
  await expect(phone.getByTestId('room-title')).toHaveText('Password room')
  await phoneContext.close()
})
