import { createHash, randomBytes } from 'node:crypto'
import { readdirSync, readFileSync } from 'node:fs'
import { networkInterfaces } from 'node:os'
import { join } from 'node:path'
import QRCode from 'qrcode'
import { io as connect, type Socket } from 'socket.io-client'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { ROOM_ROLES, roleAllows, type RoomAction, type RoomRole } from '../../shared/roles'
import type { Ack, ClientToServerEvents, JoinedRoom, RoomLiveState, ServerToClientEvents } from '../../shared/types/realtime'
import { Client, newPerson, TEST_PASSWORD, uniqueEmail } from '../support/client'
import { closeTestDb, count, testDb } from '../support/db'
import { startBuiltServer } from '../support/server'

const baseUrl = inject('baseUrl')
afterAll(closeTestDb)

/** The catcher (started by npm test) writes each message it receives into MAIL_DIR as JSON. */
interface CaughtMessage { to: string[], subject: string, text: string, html: string }
function mailTo(address: string): CaughtMessage[] {
  const dir = process.env.MAIL_DIR
  if (!dir) throw new Error('MAIL_DIR is not set: npm test starts the mail catcher and sets SMTP_URL and MAIL_DIR')
  return readdirSync(dir).filter(name => name.endsWith('.json')).sort()
    .map(name => JSON.parse(readFileSync(join(dir, name), 'utf8')) as CaughtMessage)
    .filter(m => m.to.some(to => to.toLowerCase() === address.toLowerCase()))
}
const TOKEN_IN_LINK = /\/invitations\/([\w-]{43})\b/
function latestToken(address: string) {
  const message = mailTo(address).at(-1)
  const token = message && TOKEN_IN_LINK.exec(message.text)?.[1]
  if (!token) throw new Error(`no invitation link in the mail to ${address}`)
  return token
}

const DEAD = /does not work any more/
const del = (client: Client, path: string) => client.request('DELETE', path)

async function newRoom(label = 'room') {
  const facilitator = await newPerson(baseUrl, `${label}-facilitator`)
  const room = await facilitator.client.post('/api/rooms', { title: `Depot <b>${label}</b>`, question: 'Which depot site should we buy?' })
  expect(room.status).toBe(201)
  return { facilitator, roomId: room.body.id as string, code: room.body.code as string }
}

async function invite(client: Client, roomId: string, email: string, role: RoomRole = 'stakeholder') {
  return client.post(`/api/rooms/${roomId}/invitations`, { email, role })
}

const roleOf = async (roomId: string, userId: string) =>
  (await testDb().query('select role from room_members where room_id = $1 and user_id = $2', [roomId, userId])).rows[0]?.role as RoomRole | undefined

describe('inviting by e-mail', () => {
  it('sends a real e-mail with a single-use link, and stores only a hash of the token', async () => {
    const { facilitator, roomId } = await newRoom('mail')
    const email = uniqueEmail('invitee')
    const answer = await invite(facilitator.client, roomId, email)
    expect(answer.status).toBe(201)
    expect(answer.body).toMatchObject({ email, role: 'stakeholder', state: 'invited', sendCount: 1, resent: false })
    expect(JSON.stringify(answer.body)).not.toMatch(/token/i)

    const messages = mailTo(email)
    expect(messages).toHaveLength(1)
    const message = messages[0]!
    expect(message.subject).toBe(`Test mail-facilitator invited you to “Depot <b>mail</b>” on Counterpoise`)
    expect(message.text).toContain(`${baseUrl}/invitations/`)
    // The title's markup is shown as text in the HTML body, never as markup.
    expect(message.html).toContain('Depot &lt;b&gt;mail&lt;/b&gt;')
    expect(message.html).not.toContain('<b>mail</b>')

    const token = latestToken(email)
    const { rows } = await testDb().query('select token_hash, row_to_json(i)::text as everything from invitations i where room_id = $1', [roomId])
    expect(rows).toHaveLength(1)
    expect(rows[0].token_hash).toBe(createHash('sha256').update(token).digest('hex'))
    expect(rows[0].everything).not.toContain(token)
    expect(await count('audit_log', 'details::text like $1', [`%${token}%`])).toBe(0)
    expect(await count('audit_log', 'room_id = $1 and action = \'invitation.created\' and actor_id = $2', [roomId, facilitator.user.id])).toBe(1)

    const listed = await facilitator.client.get(`/api/rooms/${roomId}/invitations`)
    expect(listed.status).toBe(200)
    expect(listed.body).toEqual([expect.objectContaining({ email, role: 'stakeholder', state: 'invited', sendCount: 1, invitedBy: 'Test mail-facilitator' })])
    expect(JSON.stringify(listed.body)).not.toContain(rows[0].token_hash)
  })

  it('shows the link\'s holder the room, the role, the inviter and a masked address, without signing in', async () => {
    const { facilitator, roomId } = await newRoom('public')
    const email = uniqueEmail('masked')
    await invite(facilitator.client, roomId, email, 'secretary')
    const answer = await new Client(baseUrl).get(`/api/invitations/${latestToken(email)}`)
    expect(answer.status).toBe(200)
    expect(answer.body).toMatchObject({
      roomTitle: 'Depot <b>public</b>',
      role: 'secretary',
      invitedBy: 'Test public-facilitator',
      email: `m•••${email.slice(email.indexOf('@'))}`,
      state: 'invited',
      accountExists: false,
    })
    expect(JSON.stringify(answer.body)).not.toContain(email)
  })

  it('re-sends to an address that already has a pending invitation instead of duplicating it, and the old link dies', async () => {
    const { facilitator, roomId } = await newRoom('again')
    const email = uniqueEmail('twice')
    await invite(facilitator.client, roomId, email, 'observer')
    const first = latestToken(email)
    const again = await invite(facilitator.client, roomId, email.toUpperCase(), 'stakeholder')
    expect(again.status).toBe(200)
    expect(again.body).toMatchObject({ resent: true, sendCount: 2, role: 'stakeholder' })
    expect(await count('invitations', 'room_id = $1', [roomId])).toBe(1)
    expect(mailTo(email)).toHaveLength(2)
    const second = latestToken(email)
    expect(second).not.toBe(first)
    expect((await new Client(baseUrl).get(`/api/invitations/${first}`)).status).toBe(404)
    expect((await new Client(baseUrl).get(`/api/invitations/${second}`)).body.role).toBe('stakeholder')
  })

  it('refuses to invite someone who is already in the room (409) and writes and sends nothing', async () => {
    const { facilitator, roomId } = await newRoom('member')
    const before = await count('invitations', 'room_id = $1', [roomId])
    const answer = await invite(facilitator.client, roomId, facilitator.email.toUpperCase())
    expect(answer.status).toBe(409)
    expect(answer.body.message).toContain('already in this room')
    expect(await count('invitations', 'room_id = $1', [roomId])).toBe(before)
    expect(mailTo(facilitator.email)).toHaveLength(0)
  })

  it.each([
    ['no address', { role: 'stakeholder' }, 'email'],
    ['a malformed address', { email: 'not an address', role: 'stakeholder' }, 'email'],
    ['an unknown role', { email: 'someone@example.org', role: 'chair' }, 'role'],
  ])('rejects %s with a field error, writing nothing', async (_label, body, field) => {
    const { facilitator, roomId } = await newRoom('invalid')
    const answer = await facilitator.client.post(`/api/rooms/${roomId}/invitations`, body)
    expect(answer.status).toBe(400)
    expect(answer.body.data.fieldErrors[field]).toBeTruthy()
    expect(await count('invitations', 'room_id = $1', [roomId])).toBe(0)
  })
})

describe('accepting an invitation', () => {
  it('creates an account for the invited address, signs it in and adds it with the invited role — once', async () => {
    const { facilitator, roomId } = await newRoom('accept')
    const email = uniqueEmail('newcomer')
    await invite(facilitator.client, roomId, email, 'stakeholder')
    const token = latestToken(email)
    const newcomer = new Client(baseUrl)
    const accepted = await newcomer.post(`/api/invitations/${token}/accept`, { displayName: 'Ffion Newcomer', password: TEST_PASSWORD })
    expect(accepted.status).toBe(201)
    expect(accepted.body).toMatchObject({ roomId, role: 'stakeholder', alreadyMember: false, user: { email, displayName: 'Ffion Newcomer' } })
    const userId = accepted.body.user.id
    expect(await roleOf(roomId, userId)).toBe('stakeholder')
    // Signed in: the new session opens the room.
    const room = await newcomer.get(`/api/rooms/${roomId}`)
    expect(room.status).toBe(200)
    expect(room.body.role).toBe('stakeholder')
    const { rows } = await testDb().query('select status, accepted_by from invitations where room_id = $1', [roomId])
    expect(rows).toEqual([{ status: 'accepted', accepted_by: userId }])
    expect(await count('audit_log', 'room_id = $1 and action = \'invitation.accepted\' and actor_id = $2', [roomId, userId])).toBe(1)
    expect(await count('audit_log', 'action = \'user.signed-up\' and actor_id = $1', [userId])).toBe(1)

    const listed = await facilitator.client.get(`/api/rooms/${roomId}/invitations`)
    expect(listed.body[0]).toMatchObject({ state: 'joined', acceptedBy: 'Ffion Newcomer' })

    // Single use: the same link no longer works, for anyone.
    const late = await newPerson(baseUrl, 'late')
    const second = await late.client.post(`/api/invitations/${token}/accept`)
    expect(second.status).toBe(404)
    expect(second.body.message).toMatch(DEAD)
    expect(await roleOf(roomId, late.user.id)).toBeUndefined()
    expect((await new Client(baseUrl).get(`/api/invitations/${token}`)).status).toBe(404)
  })

  it('lets a signed-in person join with any account; the accepting account is recorded', async () => {
    const { facilitator, roomId } = await newRoom('any')
    const email = uniqueEmail('work-address')
    await invite(facilitator.client, roomId, email, 'observer')
    const other = await newPerson(baseUrl, 'home-address')
    const answer = await other.client.post(`/api/invitations/${latestToken(email)}/accept`)
    expect(answer.status).toBe(200)
    expect(answer.body).toMatchObject({ roomId, role: 'observer', alreadyMember: false })
    expect(await roleOf(roomId, other.user.id)).toBe('observer')
    expect(await count('invitations', 'room_id = $1 and accepted_by = $2 and status = \'accepted\'', [roomId, other.user.id])).toBe(1)
  })

  it('tells the room\'s open pages the new count of who may weigh, by either way of accepting', async () => {
    const { facilitator, roomId } = await newRoom('live')
    const socket: Socket<ServerToClientEvents, ClientToServerEvents> = connect(baseUrl, { extraHeaders: { cookie: facilitator.client.cookie }, transports: ['websocket'], reconnection: false, forceNew: true })
    try {
      await new Promise<void>((resolve, reject) => {
        socket.once('connect', resolve)
        socket.once('connect_error', reject)
      })
      const joined = await new Promise<Ack<JoinedRoom>>(resolve => socket.emit('room:join', { roomId }, resolve))
      expect(joined).toMatchObject({ ok: true, data: { state: { eligible: 0 } } })
      const heard: RoomLiveState[] = []
      socket.on('room:state', state => heard.push(state))
      const eligibleSoon = async (n: number) => {
        const deadline = Date.now() + 5000
        while (!heard.some(s => s.roomId === roomId && s.eligible === n)) {
          if (Date.now() > deadline) throw new Error(`no room:state with ${n} eligible within 5 s (heard ${JSON.stringify(heard.map(s => s.eligible))})`)
          await new Promise(resolve => setTimeout(resolve, 50))
        }
      }

      // A new account made from the link.
      const email = uniqueEmail('live-new')
      await invite(facilitator.client, roomId, email, 'stakeholder')
      const accepted = await new Client(baseUrl).post(`/api/invitations/${latestToken(email)}/accept`, { displayName: 'Live Newcomer', password: TEST_PASSWORD })
      expect(accepted.status).toBe(201)
      await eligibleSoon(1)

      // A signed-in account.
      const other = await newPerson(baseUrl, 'live-signed-in')
      const second = uniqueEmail('live-second')
      await invite(facilitator.client, roomId, second, 'stakeholder')
      expect((await other.client.post(`/api/invitations/${latestToken(second)}/accept`)).status).toBe(200)
      await eligibleSoon(2)
    }
    finally {
      socket.disconnect()
    }
  })

  it('keeps the role of someone already in the room, and still uses up the link', async () => {
    const { facilitator, roomId } = await newRoom('already')
    const email = uniqueEmail('spare')
    await invite(facilitator.client, roomId, email, 'observer')
    const answer = await facilitator.client.post(`/api/invitations/${latestToken(email)}/accept`)
    expect(answer.status).toBe(200)
    expect(answer.body).toMatchObject({ role: 'facilitator', alreadyMember: true })
    expect(await roleOf(roomId, facilitator.user.id)).toBe('facilitator')
    expect(await count('invitations', 'room_id = $1 and status = \'accepted\'', [roomId])).toBe(1)
  })

  it('asks someone whose address already has an account to sign in first (409), writing nothing', async () => {
    const { facilitator, roomId } = await newRoom('exists')
    const existing = await newPerson(baseUrl, 'existing')
    await invite(facilitator.client, roomId, existing.email)
    const token = latestToken(existing.email)
    expect((await new Client(baseUrl).get(`/api/invitations/${token}`)).body.accountExists).toBe(true)
    const users = await count('users')
    const answer = await new Client(baseUrl).post(`/api/invitations/${token}/accept`, { displayName: 'Impostor', password: TEST_PASSWORD })
    expect(answer.status).toBe(409)
    expect(answer.body.message).toContain('Sign in first')
    expect(await count('users')).toBe(users)
    expect(await count('invitations', 'room_id = $1 and status = \'pending\'', [roomId])).toBe(1)
    // Signed in, the same link works.
    expect((await existing.client.post(`/api/invitations/${token}/accept`)).status).toBe(200)
    expect(await roleOf(roomId, existing.user.id)).toBe('stakeholder')
  })

  it('checks the new account\'s name and password with field errors, writing nothing', async () => {
    const { facilitator, roomId } = await newRoom('weak')
    const email = uniqueEmail('weak')
    await invite(facilitator.client, roomId, email)
    const users = await count('users')
    const answer = await new Client(baseUrl).post(`/api/invitations/${latestToken(email)}/accept`, { displayName: '', password: 'short' })
    expect(answer.status).toBe(400)
    expect(answer.body.data.fieldErrors).toMatchObject({ displayName: expect.any(String), password: expect.any(String) })
    expect(await count('users')).toBe(users)
    expect(await count('invitations', 'room_id = $1 and status = \'pending\'', [roomId])).toBe(1)
  })

  it('lets only one of two simultaneous accepts win (the row is locked)', async () => {
    const { facilitator, roomId } = await newRoom('race')
    const email = uniqueEmail('race')
    await invite(facilitator.client, roomId, email)
    const token = latestToken(email)
    const [a, b] = await Promise.all([newPerson(baseUrl, 'racer-a'), newPerson(baseUrl, 'racer-b')])
    const answers = await Promise.all([a.client.post(`/api/invitations/${token}/accept`), b.client.post(`/api/invitations/${token}/accept`)])
    expect(answers.map(r => r.status).sort()).toEqual([200, 404])
    const winner = answers[0]!.status === 200 ? a : b
    expect(await count('room_members', 'room_id = $1 and user_id = any($2)', [roomId, [a.user.id, b.user.id]])).toBe(1)
    expect(await count('invitations', 'room_id = $1 and accepted_by = $2', [roomId, winner.user.id])).toBe(1)
  })

  it('treats an expired link as dead, shows it as expired, and a re-send brings a working one', async () => {
    const { facilitator, roomId } = await newRoom('expiry')
    const email = uniqueEmail('slow')
    await invite(facilitator.client, roomId, email)
    const old = latestToken(email)
    await testDb().query('update invitations set expires_at = now() - interval \'1 minute\' where room_id = $1', [roomId])
    expect((await new Client(baseUrl).get(`/api/invitations/${old}`)).status).toBe(404)
    const late = await new Client(baseUrl).post(`/api/invitations/${old}/accept`, { displayName: 'Slow Reader', password: TEST_PASSWORD })
    expect(late.status).toBe(404)
    expect(await count('users', 'lower(email) = lower($1)', [email])).toBe(0)
    const listed = await facilitator.client.get(`/api/rooms/${roomId}/invitations`)
    expect(listed.body[0].state).toBe('expired')

    const invitationId = listed.body[0].id
    const resent = await facilitator.client.post(`/api/rooms/${roomId}/invitations/${invitationId}/resend`)
    expect(resent.status).toBe(200)
    expect(resent.body).toMatchObject({ state: 'invited', sendCount: 2 })
    expect(new Date(resent.body.expiresAt).getTime()).toBeGreaterThan(Date.now() + 6 * 24 * 3600 * 1000)
    const fresh = latestToken(email)
    expect(fresh).not.toBe(old)
    expect((await new Client(baseUrl).get(`/api/invitations/${old}`)).status).toBe(404)
    expect((await new Client(baseUrl).post(`/api/invitations/${fresh}/accept`, { displayName: 'Slow Reader', password: TEST_PASSWORD })).status).toBe(201)
    expect(await count('audit_log', 'room_id = $1 and action = \'invitation.resent\'', [roomId])).toBe(1)
  })

  it('kills the old link when a pending invitation is re-sent', async () => {
    const { facilitator, roomId } = await newRoom('resend')
    const email = uniqueEmail('resend')
    const created = await invite(facilitator.client, roomId, email)
    const old = latestToken(email)
    expect((await facilitator.client.post(`/api/rooms/${roomId}/invitations/${created.body.id}/resend`)).status).toBe(200)
    const stranger = await newPerson(baseUrl, 'old-link')
    expect((await stranger.client.post(`/api/invitations/${old}/accept`)).status).toBe(404)
    expect(await roleOf(roomId, stranger.user.id)).toBeUndefined()
    expect((await stranger.client.post(`/api/invitations/${latestToken(email)}/accept`)).status).toBe(200)
  })

  it('withdraws an invitation: the link dies at once, withdrawing again changes nothing, re-sending is refused', async () => {
    const { facilitator, roomId } = await newRoom('revoke')
    const email = uniqueEmail('revoked')
    const created = await invite(facilitator.client, roomId, email)
    const token = latestToken(email)
    const path = `/api/rooms/${roomId}/invitations/${created.body.id}`
    const revoked = await del(facilitator.client, path)
    expect(revoked.status).toBe(200)
    expect(revoked.body.state).toBe('revoked')
    expect((await new Client(baseUrl).get(`/api/invitations/${token}`)).status).toBe(404)
    const user = await newPerson(baseUrl, 'too-late')
    expect((await user.client.post(`/api/invitations/${token}/accept`)).status).toBe(404)
    expect(await roleOf(roomId, user.user.id)).toBeUndefined()

    expect((await del(facilitator.client, path)).status).toBe(200)
    expect(await count('audit_log', 'room_id = $1 and action = \'invitation.revoked\'', [roomId])).toBe(1)
    const resend = await facilitator.client.post(`${path}/resend`)
    expect(resend.status).toBe(409)
    expect(mailTo(email)).toHaveLength(1)
    // Inviting the address again makes a new invitation.
    expect((await invite(facilitator.client, roomId, email)).status).toBe(201)
  })

  it('refuses to withdraw or re-send an invitation that was used (409), and 404s one from another room', async () => {
    const { facilitator, roomId } = await newRoom('used')
    const email = uniqueEmail('used')
    const created = await invite(facilitator.client, roomId, email)
    await new Client(baseUrl).post(`/api/invitations/${latestToken(email)}/accept`, { displayName: 'Used Link', password: TEST_PASSWORD })
    expect((await del(facilitator.client, `/api/rooms/${roomId}/invitations/${created.body.id}`)).status).toBe(409)
    expect((await facilitator.client.post(`/api/rooms/${roomId}/invitations/${created.body.id}/resend`)).status).toBe(409)
    const other = await newRoom('other')
    expect((await del(other.facilitator.client, `/api/rooms/${other.roomId}/invitations/${created.body.id}`)).status).toBe(404)
    expect(await count('invitations', 'id = $1 and status = \'accepted\'', [created.body.id])).toBe(1)
  })

  it('gives every link that does not work the same answer, so nothing can be learned from it', async () => {
    const { facilitator, roomId } = await newRoom('enumerate')
    const [used, revoked, expired] = [uniqueEmail('used'), uniqueEmail('revoked'), uniqueEmail('expired')]
    await invite(facilitator.client, roomId, used)
    await new Client(baseUrl).post(`/api/invitations/${latestToken(used)}/accept`, { displayName: 'Used', password: TEST_PASSWORD })
    const r = await invite(facilitator.client, roomId, revoked)
    await del(facilitator.client, `/api/rooms/${roomId}/invitations/${r.body.id}`)
    await invite(facilitator.client, roomId, expired)
    await testDb().query('update invitations set expires_at = now() - interval \'1 second\' where lower(email) = lower($1)', [expired])
    const tokens = {
      unknown: randomBytes(32).toString('base64url'),
      malformed: 'abc',
      used: latestToken(used),
      revoked: latestToken(revoked),
      expired: latestToken(expired),
    }
    const signedIn = await newPerson(baseUrl, 'prober')
    const answers = []
    for (const token of Object.values(tokens)) {
      answers.push(await new Client(baseUrl).get(`/api/invitations/${token}`))
      answers.push(await new Client(baseUrl).post(`/api/invitations/${token}/accept`, { displayName: 'Prober', password: TEST_PASSWORD }))
      answers.push(await signedIn.client.post(`/api/invitations/${token}/accept`))
    }
    expect(new Set(answers.map(a => a.status))).toEqual(new Set([404]))
    expect(new Set(answers.map(a => a.body.message)).size).toBe(1)
    expect(answers[0]!.body.message).toMatch(DEAD)
    expect(await roleOf(roomId, signedIn.user.id)).toBeUndefined()
  })
})

describe('members and roles', () => {
  async function roomWithStakeholder() {
    const setup = await newRoom('roles')
    const stakeholder = await newPerson(baseUrl, 'member')
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, \'stakeholder\')', [setup.roomId, stakeholder.user.id])
    return { ...setup, stakeholder }
  }

  it('changes a member\'s role and records it', async () => {
    const { facilitator, roomId, stakeholder } = await roomWithStakeholder()
    const answer = await facilitator.client.patch(`/api/rooms/${roomId}/members/${stakeholder.user.id}`, { role: 'secretary' })
    expect(answer.status).toBe(200)
    expect(answer.body).toEqual({ userId: stakeholder.user.id, role: 'secretary', changed: true })
    expect(await roleOf(roomId, stakeholder.user.id)).toBe('secretary')
    expect(await count('audit_log', 'room_id = $1 and action = \'member.role-changed\' and details->>\'to\' = \'secretary\'', [roomId])).toBe(1)
    // The new role takes effect at once: a secretary may read the audit trail.
    expect((await stakeholder.client.get(`/api/rooms/${roomId}/audit`)).status).toBe(200)
  })

  it('never demotes or removes the last facilitator (409), and allows it once there is another', async () => {
    const { facilitator, roomId, stakeholder } = await roomWithStakeholder()
    const self = `/api/rooms/${roomId}/members/${facilitator.user.id}`
    const demote = await facilitator.client.patch(self, { role: 'observer' })
    expect(demote.status).toBe(409)
    expect(demote.body.message).toContain('at least one facilitator')
    expect((await del(facilitator.client, self)).status).toBe(409)
    expect(await roleOf(roomId, facilitator.user.id)).toBe('facilitator')

    expect((await facilitator.client.patch(`/api/rooms/${roomId}/members/${stakeholder.user.id}`, { role: 'facilitator' })).status).toBe(200)
    expect((await facilitator.client.patch(self, { role: 'observer' })).status).toBe(200)
    expect(await roleOf(roomId, facilitator.user.id)).toBe('observer')
    // Now the other facilitator is the last one.
    expect((await del(stakeholder.client, `/api/rooms/${roomId}/members/${stakeholder.user.id}`)).status).toBe(409)
  })

  it('removes a member: they lose the room at once', async () => {
    const { facilitator, roomId, stakeholder } = await roomWithStakeholder()
    const answer = await del(facilitator.client, `/api/rooms/${roomId}/members/${stakeholder.user.id}`)
    expect(answer.status).toBe(200)
    expect(await roleOf(roomId, stakeholder.user.id)).toBeUndefined()
    expect((await stakeholder.client.get(`/api/rooms/${roomId}`)).status).toBe(404)
    expect(await count('audit_log', 'room_id = $1 and action = \'member.removed\'', [roomId])).toBe(1)
  })

  it('answers 404 for someone who is not in the room and 400 for an unknown role, changing nothing', async () => {
    const { facilitator, roomId, stakeholder } = await roomWithStakeholder()
    const outsider = await newPerson(baseUrl, 'not-member')
    expect((await facilitator.client.patch(`/api/rooms/${roomId}/members/${outsider.user.id}`, { role: 'observer' })).status).toBe(404)
    expect((await del(facilitator.client, `/api/rooms/${roomId}/members/${outsider.user.id}`)).status).toBe(404)
    const bad = await facilitator.client.patch(`/api/rooms/${roomId}/members/${stakeholder.user.id}`, { role: 'chair' })
    expect(bad.status).toBe(400)
    expect(bad.body.data.fieldErrors.role).toBeTruthy()
    expect(await roleOf(roomId, stakeholder.user.id)).toBe('stakeholder')
  })
})

describe('joining with the room code', () => {
  it('joins as observer; a second join keeps the role; case, spaces and dashes do not matter', async () => {
    const { roomId, code, facilitator } = await newRoom('code')
    const guest = await newPerson(baseUrl, 'guest')
    const typed = `${code.slice(0, 3).toLowerCase()} - ${code.slice(3)}`
    const joined = await guest.client.post('/api/join', { code: typed })
    expect(joined.status).toBe(201)
    expect(joined.body).toMatchObject({ roomId, role: 'observer', alreadyMember: false })
    expect(await roleOf(roomId, guest.user.id)).toBe('observer')
    expect(await count('audit_log', 'room_id = $1 and action = \'room.joined-by-code\' and actor_id = $2', [roomId, guest.user.id])).toBe(1)

    await testDb().query('update room_members set role = \'stakeholder\' where room_id = $1 and user_id = $2', [roomId, guest.user.id])
    const again = await guest.client.post('/api/join', { code })
    expect(again.status).toBe(200)
    expect(again.body).toMatchObject({ roomId, role: 'stakeholder', alreadyMember: true })
    expect(await roleOf(roomId, guest.user.id)).toBe('stakeholder')
    expect((await facilitator.client.post('/api/join', { code })).body.role).toBe('facilitator')
  })

  it('answers an unknown code with 404 and a malformed one with 400, joining nothing; signed out is 401', async () => {
    const guest = await newPerson(baseUrl, 'wrong-code')
    const members = await count('room_members', 'user_id = $1', [guest.user.id])
    const unknown = await guest.client.post('/api/join', { code: '222222' })
    // 222222 is a valid-looking code; a real room holding it is vanishingly unlikely in a test database.
    expect(await count('rooms', 'code = \'222222\'')).toBe(0)
    expect(unknown.status).toBe(404)
    expect(unknown.body.message).toContain('No room has the code 222222')
    const malformed = await guest.client.post('/api/join', { code: 'K7' })
    expect(malformed.status).toBe(400)
    expect(malformed.body.data.fieldErrors.code).toBeTruthy()
    expect(await count('room_members', 'user_id = $1', [guest.user.id])).toBe(members)
    expect((await new Client(baseUrl).post('/api/join', { code: '222222' })).status).toBe(401)
  })

  it('stops someone guessing codes: after 10 misses in 15 minutes even a right code waits (429)', async () => {
    const { code, roomId } = await newRoom('guess')
    const guesser = await newPerson(baseUrl, 'guesser')
    for (let i = 0; i < 10; i++) {
      expect((await guesser.client.post('/api/join', { code: `33333${i}`.slice(0, 6) })).status).toBe(404)
    }
    const blocked = await guesser.client.post('/api/join', { code })
    expect(blocked.status).toBe(429)
    expect(blocked.headers.get('retry-after')).toBe('900')
    expect(await roleOf(roomId, guesser.user.id)).toBeUndefined()
    // Someone else is not affected.
    expect((await (await newPerson(baseUrl, 'honest')).client.post('/api/join', { code })).status).toBe(201)
  })

  it('serves the join link as a QR code (SVG) to members', async () => {
    const { facilitator, roomId, code } = await newRoom('qr')
    const answer = await fetch(`${baseUrl}/api/rooms/${roomId}/join-qr.svg`, { headers: { cookie: facilitator.client.cookie } })
    expect(answer.status).toBe(200)
    expect(answer.headers.get('content-type')).toMatch(/^image\/svg\+xml/)
    const svg = await answer.text()
    // Same library and options as the route: equal SVGs mean the same encoded text.
    const expected = await QRCode.toString(`${baseUrl}/join?code=${code}`, { type: 'svg', errorCorrectionLevel: 'M', margin: 2, color: { dark: '#0c2829', light: '#ffffff' } })
    expect(svg).toBe(expected)
    const wrong = await QRCode.toString(`${baseUrl}/join?code=${code}X`, { type: 'svg', errorCorrectionLevel: 'M', margin: 2, color: { dark: '#0c2829', light: '#ffffff' } })
    expect(svg).not.toBe(wrong)
  })
})

/**
 * Every route here × every room role, with real sessions. People routes follow `people:manage`,
 * the QR code `room:view`; outsiders get 404, signed-out callers 401.
 */
describe('the role table, enforced by the invitation and member routes', () => {
  let roomId = ''
  const people: Record<string, Client> = {}

  /** A fresh pending invitation (straight into the table) for routes that use one up. */
  async function pendingInvitation() {
    const { rows } = await testDb().query(
      'insert into invitations (room_id, email, role, token_hash, expires_at) values ($1, $2, \'observer\', $3, now() + interval \'1 day\') returning id',
      [roomId, uniqueEmail('table'), randomBytes(32).toString('hex')],
    )
    return rows[0].id as string
  }
  /** A fresh stakeholder to change or remove. */
  async function spareMember() {
    const { rows } = await testDb().query(
      'insert into users (email, display_name, password_hash) values ($1, \'Spare Member\', \'not-a-hash\') returning id',
      [uniqueEmail('spare')],
    )
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, \'stakeholder\')', [roomId, rows[0].id])
    return rows[0].id as string
  }

  const routes: Record<string, { action: RoomAction, ok: number, call: (c: Client) => Promise<number> }> = {
    'POST invitations': { action: 'people:manage', ok: 201, call: async c => (await invite(c, roomId, uniqueEmail('table'), 'observer')).status },
    'GET invitations': { action: 'people:manage', ok: 200, call: async c => (await c.get(`/api/rooms/${roomId}/invitations`)).status },
    'POST resend': { action: 'people:manage', ok: 200, call: async c => (await c.post(`/api/rooms/${roomId}/invitations/${await pendingInvitation()}/resend`)).status },
    'DELETE invitation': { action: 'people:manage', ok: 200, call: async c => (await del(c, `/api/rooms/${roomId}/invitations/${await pendingInvitation()}`)).status },
    'PATCH member': { action: 'people:manage', ok: 200, call: async c => (await c.patch(`/api/rooms/${roomId}/members/${await spareMember()}`, { role: 'observer' })).status },
    'DELETE member': { action: 'people:manage', ok: 200, call: async c => (await del(c, `/api/rooms/${roomId}/members/${await spareMember()}`)).status },
    'GET join-qr.svg': { action: 'room:view', ok: 200, call: async c => (await c.get(`/api/rooms/${roomId}/join-qr.svg`)).status },
  }

  beforeAll(async () => {
    const facilitator = await newPerson(baseUrl, 'table-facilitator')
    roomId = (await facilitator.client.post('/api/rooms', { title: 'People role table', question: 'Does the people role table hold?' })).body.id
    people.facilitator = facilitator.client
    for (const role of ROOM_ROLES.filter(r => r !== 'facilitator')) {
      const person = await newPerson(baseUrl, role)
      await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, person.user.id, role])
      people[role] = person.client
    }
    people.outsider = (await newPerson(baseUrl, 'table-outsider')).client
    people['signed-out'] = new Client(baseUrl)
  })

  const cases = Object.entries(routes).flatMap(([name, route]) => [
    ...ROOM_ROLES.map(role => [name, role, roleAllows(role, route.action) ? route.ok : 403] as const),
    [name, 'outsider', 404] as const,
    [name, 'signed-out', 401] as const,
  ])

  it.each(cases)('%s as %s → %i', async (name, who, expected) => {
    const invitationsBefore = await count('invitations', 'room_id = $1', [roomId])
    const status = await routes[name]!.call(people[who]!)
    expect(status).toBe(expected)
    if (expected >= 400 && name === 'POST invitations') expect(await count('invitations', 'room_id = $1', [roomId])).toBe(invitationsBefore)
  })
})

describe('the development mail viewer and a missing mail server', () => {
  it('lists caught mail when COUNTERPOISE_DEV_MAIL=1', async () => {
    const { facilitator, roomId } = await newRoom('viewer')
    const email = uniqueEmail('viewer')
    await invite(facilitator.client, roomId, email)
    const answer = await new Client(baseUrl).get('/api/dev/mail')
    expect(answer.status).toBe(200)
    const mine = answer.body.messages.find((m: { to: string[] }) => m.to.includes(email))
    expect(mine.subject).toContain('Depot <b>viewer</b>')
    expect(mine.text).toContain(`${baseUrl}/invitations/`)
  })

  // The viewer shows invitation links, which let their holder into a room: from any address but
  // the machine's own, only a site administrator sees it. Reached through a non-loopback address
  // of this machine (the server listens on all of them).
  const outside = Object.values(networkInterfaces()).flat().find(i => i && !i.internal && i.family === 'IPv4')?.address
  it.skipIf(!outside)('shows caught mail to other addresses only for a site administrator', async () => {
    const url = new URL(baseUrl)
    url.hostname = outside!
    const remote = url.origin
    const stranger = await newPerson(remote, 'mail-stranger')
    expect((await new Client(remote).get('/api/dev/mail')).status).toBe(404)
    expect((await stranger.client.get('/api/dev/mail')).status).toBe(404)
    await testDb().query('update users set site_role = \'admin\' where id = $1', [stranger.user.id])
    const admin = new Client(remote)
    expect((await admin.post('/api/auth/sign-in', { email: stranger.email, password: TEST_PASSWORD })).status).toBe(200)
    expect((await admin.get('/api/dev/mail')).status).toBe(200)
  })

  it('hides the viewer without COUNTERPOISE_DEV_MAIL, and answers 503 (writing nothing) when mail cannot be sent', async () => {
    // A second server from the same build, with the viewer off and a mail server that is not there.
    const closed = await startBuiltServer({ ...process.env, BASE_URL: '', COUNTERPOISE_DEV_MAIL: '', SMTP_URL: 'smtp://127.0.0.1:9' })
    try {
      expect((await new Client(closed.baseUrl).get('/api/dev/mail')).status).toBe(404)
      const facilitator = await newPerson(closed.baseUrl, 'no-mail')
      const room = await facilitator.client.post('/api/rooms', { title: 'No mail room', question: 'Does a failed mail leave anything behind?' })
      const email = uniqueEmail('unsent')
      const answer = await invite(facilitator.client, room.body.id, email)
      expect(answer.status).toBe(503)
      expect(answer.body.message).toContain('nothing was sent')
      expect(await count('invitations', 'room_id = $1', [room.body.id])).toBe(0)
      expect(await count('audit_log', 'room_id = $1 and action like \'invitation.%\'', [room.body.id])).toBe(0)
    }
    finally {
      await closed.stop()
    }
  })
})
