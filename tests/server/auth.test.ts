import { afterAll, describe, expect, inject, it } from 'vitest'
import { Client, newPerson, TEST_PASSWORD, uniqueEmail } from '../support/client'
import { closeTestDb, count } from '../support/db'

const baseUrl = inject('baseUrl')
afterAll(closeTestDb)

describe('sign-up', () => {
  it('creates an account, signs it in and hashes the password', async () => {
    const { client, email, user } = await newPerson(baseUrl, 'signup')
    expect(user.email).toBe(email)
    expect(user.siteRole).toBe('user')
    expect(user).not.toHaveProperty('passwordHash')
    const session = await client.get('/api/_auth/session')
    expect(session.body.user.id).toBe(user.id)
    // nuxt-auth-utils' scrypt helper writes PHC strings; the plain password is nowhere.
    expect(await count('users', 'id = $1 and password_hash like \'$scrypt$%\' and password_hash not like $2', [user.id, `%${TEST_PASSWORD}%`])).toBe(1)
  })

  it('refuses a second account for the same address, whatever its case, with 409', async () => {
    const { email } = await newPerson(baseUrl, 'dup')
    const again = await new Client(baseUrl).post('/api/auth/sign-up', { displayName: 'Again', email: email.toUpperCase(), password: TEST_PASSWORD })
    expect(again.status).toBe(409)
    expect(again.body.message).toMatch(/already exists/)
    expect(await count('users', 'lower(email) = lower($1)', [email])).toBe(1)
  })

  it.each([
    ['an invalid e-mail', { displayName: 'X', email: 'not-an-address', password: TEST_PASSWORD }, 'email', /e-mail address/],
    ['a short password', { displayName: 'X', email: 'short@test.counterpoise.example', password: 'short' }, 'password', /at least 10/],
    ['a missing name', { email: 'noname@test.counterpoise.example', password: TEST_PASSWORD }, 'displayName', /name/],
  ])('answers %s with 400 and a field message, writing nothing', async (_label, body, field, message) => {
    const before = await count('users')
    const answer = await new Client(baseUrl).post('/api/auth/sign-up', body)
    expect(answer.status).toBe(400)
    expect(answer.body.data.fieldErrors[field]).toMatch(message)
    expect(await count('users')).toBe(before)
  })

  it('answers a body that is not JSON with 400, not 500', async () => {
    const answer = await fetch(`${baseUrl}/api/auth/sign-up`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"email":' })
    expect(answer.status).toBe(400)
  })
})

describe('sign-in and sign-out', () => {
  it('signs in with the right password and out again', async () => {
    const { email } = await newPerson(baseUrl, 'signin')
    const client = new Client(baseUrl)
    expect((await client.get('/api/rooms')).status).toBe(401)
    const signedIn = await client.post('/api/auth/sign-in', { email, password: TEST_PASSWORD })
    expect(signedIn.status).toBe(200)
    expect((await client.get('/api/rooms')).status).toBe(200)
    expect((await client.post('/api/auth/sign-out')).status).toBe(200)
    expect((await client.get('/api/rooms')).status).toBe(401)
  })

  it('gives the same answer for a wrong password and an unknown address', async () => {
    const { email } = await newPerson(baseUrl, 'wrongpw')
    const wrongPassword = await new Client(baseUrl).post('/api/auth/sign-in', { email, password: 'not-the-password' })
    const unknown = await new Client(baseUrl).post('/api/auth/sign-in', { email: uniqueEmail('nobody'), password: 'not-the-password' })
    expect(wrongPassword.status).toBe(401)
    expect(unknown.status).toBe(401)
    expect(wrongPassword.body.message).toBe(unknown.body.message)
    expect(wrongPassword.body.message).toBe('Wrong e-mail address or password.')
  })

  it('refuses an account for a while after five failed sign-ins, even with the right password', async () => {
    const { email } = await newPerson(baseUrl, 'throttle')
    const client = new Client(baseUrl)
    for (let attempt = 0; attempt < 5; attempt++) {
      expect((await client.post('/api/auth/sign-in', { email, password: `wrong-${attempt}-password` })).status).toBe(401)
    }
    const refused = await client.post('/api/auth/sign-in', { email, password: TEST_PASSWORD })
    expect(refused.status).toBe(429)
    expect(refused.headers.get('retry-after')).toBe('900')
    expect(refused.body.message).toMatch(/Too many failed sign-ins/)
  })

  it('refuses an address after many failures across different accounts', async () => {
    // Over IPv6 loopback, so this address's count does not slow the other tests (they use 127.0.0.1).
    const v6 = baseUrl.replace('127.0.0.1', '[::1]')
    const client = new Client(v6)
    let status = 0
    for (let attempt = 0; attempt < 31 && status !== 429; attempt++) {
      status = (await client.post('/api/auth/sign-in', { email: uniqueEmail('spray'), password: 'wrong-password-here' })).status
      if (attempt < 30) expect(status).toBe(401)
    }
    expect(status).toBe(429)
  })
})

describe('the sign-in guard', () => {
  it.each(['/rooms', '/rooms/new', '/admin/users'])('sends a signed-out visitor of %s to /sign-in with a relative redirect', async (path) => {
    const answer = await fetch(`${baseUrl}${path}`, { redirect: 'manual' })
    expect(answer.status).toBe(302)
    const location = new URL(answer.headers.get('location')!, baseUrl)
    expect(location.pathname).toBe('/sign-in')
    expect(location.searchParams.get('redirect')).toBe(path)
  })

  it('lets anyone see the landing and sign-in pages', async () => {
    for (const path of ['/', '/sign-in', '/sign-up']) {
      expect((await fetch(`${baseUrl}${path}`, { redirect: 'manual' })).status).toBe(200)
    }
  })
})
