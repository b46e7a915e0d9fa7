import { expect, test, uniqueEmail } from './fixtures'

test('a newcomer signs up, creates a room and finds it under My rooms', async ({ page }) => {
  await page.goto('/')
  await expect(page.getByRole('heading', { level: 1 })).toContainText('balance')
  await page.getByRole('link', { name: 'Create an account' }).first().click()

  // The same schema as the route checks the form before it is sent.
  await page.getByRole('button', { name: 'Create account' }).click()
  await expect(page.getByText('Enter your name.')).toBeVisible()

  const email = uniqueEmail('newcomer')
  await page.getByLabel('Your name').fill('Rhian Newcomer')
  await page.getByLabel('E-mail address').fill(email)
  await page.getByLabel('Password').fill('short')
  await page.getByRole('button', { name: 'Create account' }).click()
  await expect(page.getByText('Use at least 10 characters.')).toBeVisible()
  await page.getByLabel('Password').fill('a-long-enough-password')
  await page.getByRole('button', { name: 'Create account' }).click()

  await expect(page).toHaveURL(/\/rooms$/)
  await expect(page.getByText('You are not in any room yet.')).toBeVisible()
  await page.getByRole('link', { name: 'New room' }).click()
  await page.getByLabel('Title').fill('Library opening hours')
  await page.getByLabel('Question the room decides').fill('Which opening-hours plan should the library adopt?')
  await page.getByRole('button', { name: 'Create room' }).click()

  await expect(page.getByTestId('room-title')).toHaveText('Library opening hours')
  await expect(page.getByTestId('room-role')).toHaveText('Facilitator')
  await expect(page.getByRole('navigation', { name: 'Meeting stage' }).getByText('Prepare')).toHaveAttribute('aria-current', 'step')

  await page.getByRole('link', { name: 'My rooms' }).click()
  const card = page.getByTestId('room-list').getByRole('link', { name: /Library opening hours/ })
  await expect(card).toBeVisible()
  await expect(card.getByTestId('room-role')).toHaveText('Facilitator')
})

test('a signed-out visitor is sent to sign in and comes back to the page they asked for', async ({ page }) => {
  await page.goto('/rooms/new')
  await expect(page).toHaveURL(url => url.pathname === '/sign-in' && url.searchParams.get('redirect') === '/rooms/new')
  await page.getByLabel('E-mail address').fill('facilitator@demo.counterpoise.example')
  await page.getByLabel('Password').fill('wrong-password-for-sure')
  await page.getByRole('button', { name: 'Sign in' }).click()
  await expect(page.getByTestId('form-error')).toHaveText('Wrong e-mail address or password.')
  await page.getByLabel('Password').fill('kelderwick-demo')
  await page.getByRole('button', { name: 'Sign in' }).click()
  await expect(page).toHaveURL(/\/rooms\/new$/)
  await expect(page.getByRole('heading', { name: 'New room' })).toBeVisible()
})

test('an absolute redirect after sign-in is ignored', async ({ page }) => {
  await page.goto('/sign-in?redirect=https://elsewhere.example/phish')
  await page.getByLabel('E-mail address').fill('observer@demo.counterpoise.example')
  await page.getByLabel('Password').fill('kelderwick-demo')
  await page.getByRole('button', { name: 'Sign in' }).click()
  await expect(page).toHaveURL(/\/rooms$/)
  await expect(page.getByTestId('room-list')).toContainText('Kelderwick sea-front defences')
})

test('signing out ends the session', async ({ page }) => {
  await page.goto('/sign-in')
  await page.getByLabel('E-mail address').fill('secretary@demo.counterpoise.example')
  await page.getByLabel('Password').fill('kelderwick-demo')
  await page.getByRole('button', { name: 'Sign in' }).click()
  await expect(page).toHaveURL(/\/rooms$/)
  await page.getByRole('button', { name: 'Sign out' }).click()
  await expect(page).toHaveURL(/\/sign-in/)
  await page.goto('/rooms')
  await expect(page).toHaveURL(url => url.pathname === '/sign-in' && url.searchParams.get('redirect') === '/rooms')
})

test('a phone-sized page has no horizontal scrolling', async ({ page }) => {
  await page.goto('/')
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)
  expect(overflow).toBeLessThanOrEqual(0)
})
