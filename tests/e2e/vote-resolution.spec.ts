import { offsetInSignedStream, withFlippedByte } from '../fixtures/minutes/sampleMinutes'
import { testDb } from '../support/db'
import { expect, test, uniqueEmail } from './fixtures'

/**
 * Efficient by hand: North Wall (cheapest), Tidal Barrier (most homes), Dune Nourishment (least
 * habitat). Groyne Field (20, 1000, 10) is beaten by Dune Nourishment (12, 1500, 2) on every
 * criterion: dominated. Offshore Reef costs 40 £m, above the 30 £m cap: outside limits.
 */
const criteria = [
  { id: 'cost', name: 'Capital cost', unit: '£m', direction: 'min', highest: 30, precision: 1 },
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
const password = 'a-long-enough-password'

test('vote, resolution, signed minutes: a phone votes, the facilitator records, the secretary signs and sends, the check page verifies', async ({ page, browser, baseURL }, testInfo) => {
  test.skip(testInfo.project.name !== 'desktop', 'the facilitator works at a desk; the phone is a second context here')
  test.skip(!process.env.COUNTERPOISE_SIGNING_P12, 'npm test gives the server the signing key')
  test.setTimeout(150_000)

  // The facilitator (this page) with a room and its ledger.
  expect((await page.request.post('/api/auth/sign-up', { data: { displayName: 'Vera Facilitator', email: uniqueEmail('vote-facilitator'), password } })).status()).toBe(201)
  const room = await page.request.post('/api/rooms', { data: { title: 'Vote and resolution', question: 'Which sea-front defence should the town build?' } })
  const { id: roomId } = await room.json()
  expect((await page.request.put(`/api/rooms/${roomId}/ledger`, { data: { baseVersion: 0, criteria, alternatives } })).status()).toBe(201)

  // A stakeholder on a phone-sized screen in a context of its own.
  const phoneContext = await browser.newContext({ baseURL, viewport: { width: 412, height: 839 }, isMobile: true, hasTouch: true })
  const phone = await phoneContext.newPage()
  const signUp = await phone.request.post('/api/auth/sign-up', { data: { displayName: 'Pol Stakeholder', email: uniqueEmail('vote-stakeholder'), password } })
  const { id: stakeholderId } = await signUp.json()
  await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, stakeholderId, 'stakeholder'])

  // The facilitator opens the vote on the efficient alternatives, ticked to start with.
  await page.goto(`/rooms/${roomId}?tab=decide`)
  const form = page.getByTestId('open-vote-form')
  await expect(form).toBeVisible()
  for (const id of ['wall', 'barrier', 'dunes']) await expect(page.getByTestId(`shortlist-${id}`)).toBeChecked()
  for (const id of ['groynes', 'reef']) await expect(page.getByTestId(`shortlist-${id}`)).not.toBeChecked()
  await expect(page.getByTestId('decide-panel').getByTestId('connection')).toHaveText('Live')
  await page.getByTestId('open-vote').click()
  await expect(page.getByTestId('vote-count')).toContainText('0 of 1 stakeholders have voted')

  // The phone casts a ballot: approve, object, abstain with big buttons.
  await phone.goto(`/rooms/${roomId}/balance`)
  const vote = phone.getByTestId('balance-vote')
  await expect(vote).toBeVisible()
  await expect(phone.getByTestId('ballot-state')).toHaveAttribute('data-state', 'incomplete')
  await phone.getByTestId('choose-wall-object').click()
  await phone.getByTestId('choose-barrier-abstain').click()
  await expect(phone.getByTestId('send-ballot')).toBeDisabled()
  await phone.getByTestId('choose-dunes-approve').click()
  await phone.getByTestId('send-ballot').click()
  await expect(phone.getByTestId('ballot-state')).toHaveAttribute('data-state', 'confirmed')
  const stored = async () => (await testDb().query('select choices, revision from ballots b join votes v on v.id = b.vote_id where v.room_id = $1', [roomId])).rows
  expect(await stored()).toEqual([{ choices: { wall: 'object', barrier: 'abstain', dunes: 'approve' }, revision: 1 }])

  // The console's tally follows without a reload.
  await expect(page.getByTestId('vote-count')).toContainText('1 of 1 stakeholders have voted')
  await expect(page.getByTestId('tally-dunes')).toHaveAttribute('data-approve', '1')
  await expect(page.getByTestId('tally-wall')).toHaveAttribute('data-object', '1')

  // The gallery (big screen) shows the same tally, and follows it live too.
  const gallery = await page.context().newPage()
  await gallery.goto(`/rooms/${roomId}/gallery`)
  await expect(gallery.getByTestId('gallery-vote-count')).toHaveText('1 of 1 have voted')
  await expect(gallery.getByTestId('gallery-vote').getByTestId('tally-dunes')).toHaveAttribute('data-approve', '1')
  await expect(gallery.getByTestId('gallery-connection')).toBeVisible()

  // Offline, a change is kept and sent once the phone is back; it replaces the ballot, once.
  await phoneContext.setOffline(true)
  await phone.getByTestId('choose-barrier-approve').click()
  await phone.getByTestId('send-ballot').click()
  await expect(phone.getByTestId('ballot-state')).toHaveAttribute('data-state', 'queued')
  await phoneContext.setOffline(false)
  await expect(phone.getByTestId('ballot-state')).toHaveAttribute('data-state', 'confirmed', { timeout: 20_000 })
  expect(await stored()).toEqual([{ choices: { wall: 'object', barrier: 'approve', dunes: 'approve' }, revision: 2 }])
  await expect(page.getByTestId('tally-barrier')).toHaveAttribute('data-approve', '1')
  await expect(gallery.getByTestId('gallery-vote').getByTestId('tally-barrier')).toHaveAttribute('data-approve', '1')

  // Everyone has voted, so closing asks nothing; the phone learns the vote is closed.
  await page.getByTestId('close-vote').click()
  await expect(page.getByTestId('vote-notice')).toContainText('The vote is closed')
  await expect(vote).toHaveAttribute('data-status', 'closed')

  // The resolution: a dominated choice shows the engine's words and needs a justification.
  const resolution = page.getByTestId('resolution-form')
  await expect(resolution).toHaveAttribute('data-mode', 'record')
  await page.getByTestId('resolution-alternative').selectOption('groynes')
  await expect(page.getByTestId('resolution-verdict')).toContainText('Dominated by Dune Nourishment — worse on Capital cost, Homes protected and Habitat affected')
  await page.getByLabel('Rationale').fill('The groynes reuse the existing sea wall footings.')
  await page.getByTestId('resolution-save').click()
  await expect(page.getByText('Write why the room chooses it anyway.')).toBeVisible()
  expect((await testDb().query('select count(*)::int as n from resolutions where room_id = $1', [roomId])).rows[0].n).toBe(0)
  await page.getByLabel('Justification (required)').fill('Only option the harbour board can fund this year.')
  await page.getByLabel('Dissent (optional)').fill('The wildlife trust objects to any hard structure.')
  await page.getByTestId('resolution-save').click()
  await expect(page.getByTestId('resolution-notice')).toContainText('The decision is recorded')
  const record = page.locator('[data-current="true"]')
  await expect(record).toContainText('Groyne Field')
  await expect(record.getByTestId('resolution-justification')).toContainText('Only option the harbour board can fund this year.')
  await expect(record.getByTestId('resolution-frozen')).toContainText('Not signed yet')
  await expect(resolution).toHaveAttribute('data-mode', 'edit')
  const { rows } = await testDb().query('select alternative_id, engine_status, justification from resolutions where room_id = $1', [roomId])
  expect(rows).toEqual([{ alternative_id: 'groynes', engine_status: 'dominated', justification: 'Only option the harbour board can fund this year.' }])

  // The gallery's narrowing ends with the chosen alternative; the closed vote leaves the screen.
  await expect(gallery.getByTestId('gallery-vote')).toHaveCount(0)
  await expect(gallery.getByTestId('narrowing-chosen')).toContainText('Groyne Field')
  await phoneContext.close()

  // The secretary previews the minutes, signs them and sends them to everyone.
  const secretaryContext = await browser.newContext({ baseURL })
  const secretary = await secretaryContext.newPage()
  const secretarySignUp = await secretary.request.post('/api/auth/sign-up', { data: { displayName: 'Sian Secretary', email: uniqueEmail('vote-secretary'), password } })
  await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, (await secretarySignUp.json()).id, 'secretary'])
  await secretary.goto(`/rooms/${roomId}/minutes`)
  await expect(secretary.getByTestId('minutes-preview')).toBeVisible()
  await expect(secretary.getByTestId('minutes-decision')).toContainText('Groyne Field')
  await expect(secretary.getByTestId('minutes-decision')).toContainText('Only option the harbour board can fund this year.')
  // The minutes say plainly that the room chose a dominated alternative.
  await expect(secretary.getByTestId('minutes-decision')).toContainText(/dominated/i)
  await secretary.getByTestId('minutes-sign').click()
  await secretary.getByTestId('minutes-sign-dialog').getByTestId('confirm-accept').click()
  await expect(secretary.getByTestId('minutes-record')).toHaveCount(1)
  const sha256 = (await secretary.getByTestId('minutes-record-sha256').textContent())!.trim()
  expect(sha256).toMatch(/^[0-9a-f]{64}$/)
  // Signing froze the resolution: the database says so, and refuses to change it.
  expect((await testDb().query('select frozen_at is not null as frozen from resolutions where room_id = $1', [roomId])).rows).toEqual([{ frozen: true }])
  await expect(testDb().query('update resolutions set rationale = $2 where room_id = $1', [roomId, 'rewritten'])).rejects.toThrow(/frozen/)
  await secretary.getByTestId('minutes-send').click()
  await secretary.getByTestId('minutes-send-dialog').getByTestId('confirm-accept').click()
  await expect(secretary.getByTestId('minutes-notice')).toHaveText(/^Sent to \d+ members\.$/)

  // Anyone can check the file: the signed copy is valid and held here; one changed byte is not.
  const href = await secretary.getByTestId('minutes-record').getByRole('link').getAttribute('href')
  const signed = Buffer.from(await (await secretary.request.get(href!)).body())
  await secretaryContext.close()
  await page.goto('/check-minutes')
  await expect(page.getByTestId('check-input')).toBeEnabled()
  await page.getByTestId('check-input').setInputFiles({ name: 'minutes.pdf', mimeType: 'application/pdf', buffer: signed })
  await expect(page.getByTestId('verdict-title')).toHaveText('Valid signature')
  await expect(page.getByTestId('check-sha256')).toHaveText(sha256)
  await expect(page.getByTestId('check-record')).toContainText('Yes: the minutes of Vote and resolution')
  await page.getByTestId('check-input').setInputFiles({ name: 'minutes-changed.pdf', mimeType: 'application/pdf', buffer: withFlippedByte(signed, offsetInSignedStream(signed)) })
  await expect(page.getByTestId('verdict-title')).toHaveText('Not valid: the file was changed after signing')
  await expect(page.getByTestId('verdict')).toHaveAttribute('data-verdict', 'changed')
})
