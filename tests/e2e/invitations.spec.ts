import { devices, type Page } from '@playwright/test'
import { expect, test, uniqueEmail } from './fixtures'
import { invitationLinkFor } from './mail'

async function signUp(page: Page, displayName: string) {
  await page.goto('/sign-up')
  await page.getByLabel('Your name').fill(displayName)
  await page.getByLabel('E-mail address').fill(uniqueEmail(displayName.split(' ')[0]!.toLowerCase()))
  await page.getByLabel('Password').fill('a-long-enough-password')
  await page.getByRole('button', { name: 'Create account' }).click()
  await expect(page).toHaveURL(/\/rooms$/)
}

/** Signs up a facilitator in `page`, creates a room there and opens its People tab; returns the room's id and code. */
async function facilitatorWithRoom(page: Page, title: string) {
  await signUp(page, 'Carys Facilitator')
  await page.goto('/rooms/new')
  await page.getByLabel('Title').fill(title)
  await page.getByLabel('Question the room decides').fill('Which bus timetable should the council adopt?')
  await page.getByRole('button', { name: 'Create room' }).click()
  await expect(page.getByTestId('room-title')).toHaveText(title)
  const id = /\/rooms\/([\w-]+)/.exec(page.url())![1]!
  await page.getByRole('tab', { name: 'People' }).click()
  const code = (await page.getByTestId('room-code').textContent())!.trim()
  return { id, code }
}

test('a facilitator invites a stakeholder by e-mail; the stakeholder opens the link on a phone, makes an account and lands in the room', async ({ page, browser, baseURL }, testInfo) => {
  test.skip(testInfo.project.name !== 'desktop', 'the facilitator works at a desktop; the phone part opens its own phone-sized context')
  const room = await facilitatorWithRoom(page, 'Bus timetable review')

  const invitee = uniqueEmail('stakeholder')
  await page.getByLabel('E-mail address').fill(invitee)
  await page.getByLabel('Role', { exact: true }).selectOption('stakeholder')
  await page.getByRole('button', { name: 'Send invitation' }).click()
  await expect(page.getByTestId('people-notice')).toHaveText(`Invitation sent to ${invitee} (as stakeholder).`)
  const row = page.getByTestId(`invitation-${invitee}`)
  await expect(row.getByTestId('invitation-state')).toHaveText('Invited')

  // The mail really went through SMTP to the catcher; the sent link is what the stakeholder opens.
  const link = invitationLinkFor(invitee)
  expect(link).toBeTruthy()
  expect(link!.startsWith(`${baseURL}/invitations/`)).toBe(true)

  const phone = await browser.newContext({ ...devices['Pixel 7'], baseURL })
  try {
    const stakeholder = await phone.newPage()
    await stakeholder.goto(link!)
    await expect(stakeholder.getByRole('heading', { name: 'Bus timetable review' })).toBeVisible()
    await expect(stakeholder.getByTestId('invitation-role')).toHaveText('Stakeholder')
    const overflow = await stakeholder.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)
    expect(overflow).toBeLessThanOrEqual(0)

    // The same rules as the route check the form first.
    await stakeholder.getByLabel('Your name').fill('Dai Stakeholder')
    await stakeholder.getByLabel('Password').fill('short')
    await stakeholder.getByRole('button', { name: 'Create account and join as Stakeholder' }).click()
    await expect(stakeholder.getByText('Use at least 10 characters.')).toBeVisible()
    await stakeholder.getByLabel('Password').fill('a-long-enough-password')
    await stakeholder.getByRole('button', { name: 'Create account and join as Stakeholder' }).click()

    await expect(stakeholder).toHaveURL(new RegExp(`/rooms/${room.id}$`))
    await expect(stakeholder.getByTestId('room-title')).toHaveText('Bus timetable review')
    await expect(stakeholder.getByTestId('room-role')).toHaveText('Stakeholder')

    // The link was single-use.
    await stakeholder.goto(link!)
    await expect(stakeholder.getByTestId('invitation-dead')).toContainText('does not work any more')
  }
  finally {
    await phone.close()
  }

  await page.reload()
  await expect(page.getByTestId(`invitation-${invitee}`).getByTestId('invitation-state')).toHaveText('Joined')
  await expect(page.getByTestId('member-list')).toContainText('Dai Stakeholder')
})

test('someone signed in on a phone joins as observer with the room code from the big screen', async ({ page, browser, baseURL }, testInfo) => {
  test.skip(testInfo.project.name !== 'phone', 'observers join from their phones')
  // The facilitator's room is made in a separate context, so the phone keeps its own session.
  const desk = await browser.newContext({ baseURL })
  let room: { id: string, code: string }
  try {
    room = await facilitatorWithRoom(await desk.newPage(), 'Harbour lighting')
    expect(room.code).toMatch(/^[A-Z0-9]{6}$/)
  }
  finally {
    await desk.close()
  }
  await signUp(page, 'Owain Observer')

  await page.goto(`/join?code=${room.code}`)
  await expect(page.getByLabel('Room code')).toHaveValue(room.code)
  await page.getByRole('button', { name: 'Join' }).click()
  await expect(page).toHaveURL(new RegExp(`/rooms/${room.id}$`))
  await expect(page.getByTestId('room-role')).toHaveText('Observer')

  // A wrong code is explained and changes nothing.
  await page.goto('/join')
  await page.getByLabel('Room code').fill('222222')
  await page.getByRole('button', { name: 'Join' }).click()
  await expect(page.getByTestId('form-error')).toContainText('No room has the code 222222')
})
