import { io as connect, type Socket } from 'socket.io-client'
import { afterAll, describe, expect, inject, it } from 'vitest'
import type { ClientToServerEvents, ServerToClientEvents } from '../../shared/types/realtime'
import { Client, newPerson, TEST_PASSWORD } from '../support/client'
import { closeTestDb, count, testDb } from '../support/db'

const baseUrl = inject('baseUrl')
type RoomSocket = Socket<ServerToClientEvents, ClientToServerEvents>
const sockets: RoomSocket[] = []
afterAll(async () => {
  for (const socket of sockets) socket.disconnect()
  await closeTestDb()
})

function socketFor(client: Client) {
  const socket: RoomSocket = connect(baseUrl, { extraHeaders: { cookie: client.cookie }, transports: ['websocket'], reconnection: false, forceNew: true })
  sockets.push(socket)
  return socket
}
/** 'connected', or the refusal's reason. */
const handshake = (socket: RoomSocket) => new Promise<string>((resolve) => {
  socket.once('connect', () => resolve('connected'))
  socket.once('connect_error', (error: Error & { data?: { reason?: string } }) => resolve(error.data?.reason ?? error.message))
})

const NEW_PASSWORD = 'a-brand-new-passphrase'

/** One account signed in on a laptop and on a phone (two separate sessions). */
async function personOnTwoDevices(label: string) {
  const { client: laptop, email, user } = await newPerson(baseUrl, label)
  const phone = new Client(baseUrl)
  expect((await phone.post('/api/auth/sign-in', { email, password: TEST_PASSWORD })).status).toBe(200)
  return { laptop, phone, email, user }
}

describe('changing the password', () => {
  it('ends every other session and its sockets; this one stays signed in; only the new password signs in', async () => {
    const { laptop, phone, email, user } = await personOnTwoDevices('pw-change')
    const phoneSocket = socketFor(phone)
    expect(await handshake(phoneSocket)).toBe('connected')
    const laptopSocket = socketFor(laptop)
    expect(await handshake(laptopSocket)).toBe('connected')
    const phoneGone = new Promise(resolve => phoneSocket.once('disconnect', resolve))
    const oldLaptopCookie = laptop.cookie

    const changed = await laptop.put('/api/account/password', { currentPassword: TEST_PASSWORD, newPassword: NEW_PASSWORD })
    expect(changed.status).toBe(200)
    expect(changed.body).toEqual({ changed: true })
    expect(laptop.cookie).not.toBe(oldLaptopCookie)
    expect(await phoneGone).toBe('io server disconnect')

    // The phone's session is over, for HTTP, for the session probe and for a new socket.
    const refused = await phone.get('/api/rooms')
    expect(refused.status).toBe(401)
    expect(refused.body.message).toMatch(/session has ended/)
    expect((await phone.get('/api/_auth/session')).status).toBe(401)
    expect(await handshake(socketFor(phone))).toBe('signed-out')
    // The same old cookie, replayed from a copy, is refused too.
    const replay = new Client(baseUrl)
    replay.cookie = oldLaptopCookie
    expect((await replay.get('/api/rooms')).status).toBe(401)

    // The laptop carries on with its fresh session, and its new socket is let in.
    expect((await laptop.get('/api/rooms')).status).toBe(200)
    expect((await laptop.get('/api/_auth/session')).body.user.id).toBe(user.id)
    expect(await handshake(socketFor(laptop))).toBe('connected')

    expect((await new Client(baseUrl).post('/api/auth/sign-in', { email, password: TEST_PASSWORD })).status).toBe(401)
    expect((await new Client(baseUrl).post('/api/auth/sign-in', { email, password: NEW_PASSWORD })).status).toBe(200)
    expect(await count('audit_log', 'actor_id = $1 and action = $2', [user.id, 'user.password-changed'])).toBe(1)
  })

  it.each([
    ['a wrong current password', { currentPassword: 'not-the-password', newPassword: NEW_PASSWORD }, 'currentPassword', /not right/],
    ['a short new password', { currentPassword: TEST_PASSWORD, newPassword: 'short' }, 'newPassword', /at least 10/],
    ['the same password again', { currentPassword: TEST_PASSWORD, newPassword: TEST_PASSWORD }, 'newPassword', /different/],
    ['a missing current password', { newPassword: NEW_PASSWORD }, 'currentPassword', /current password/],
  ])('answers %s with 400 and a field message, changing nothing and ending no session', async (_label, body, field, message) => {
    const { laptop, phone, user } = await personOnTwoDevices('pw-bad')
    const hashBefore = (await testDb().query('select password_hash, session_epoch from users where id = $1', [user.id])).rows[0]
    const answer = await laptop.put('/api/account/password', body)
    expect(answer.status).toBe(400)
    expect(answer.body.data.fieldErrors[field]).toMatch(message)
    expect((await testDb().query('select password_hash, session_epoch from users where id = $1', [user.id])).rows[0]).toEqual(hashBefore)
    expect((await phone.get('/api/rooms')).status).toBe(200)
    expect((await laptop.get('/api/rooms')).status).toBe(200)
  })

  it('counts wrong current passwords against the sign-in limit', async () => {
    const { laptop } = await personOnTwoDevices('pw-guess')
    for (let attempt = 0; attempt < 5; attempt++) {
      expect((await laptop.put('/api/account/password', { currentPassword: `guess-${attempt}-wrong`, newPassword: NEW_PASSWORD })).status).toBe(400)
    }
    const refused = await laptop.put('/api/account/password', { currentPassword: TEST_PASSWORD, newPassword: NEW_PASSWORD })
    expect(refused.status).toBe(429)
  })

  it('needs a signed-in session', async () => {
    expect((await new Client(baseUrl).put('/api/account/password', { currentPassword: TEST_PASSWORD, newPassword: NEW_PASSWORD })).status).toBe(401)
  })
})
