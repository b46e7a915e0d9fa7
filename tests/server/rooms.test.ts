import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { ROOM_ACTIONS, ROOM_ROLES, roleAllows, type RoomAction, type RoomRole } from '../../shared/roles'
import { Client, newPerson } from '../support/client'
import { closeTestDb, count, testDb } from '../support/db'

const baseUrl = inject('baseUrl')
afterAll(closeTestDb)

describe('rooms', () => {
  it('creates a room with its creator as facilitator, and lists it under My rooms', async () => {
    const { client, user } = await newPerson(baseUrl, 'creator')
    const created = await client.post('/api/rooms', { title: 'Depot replacement', question: 'Which depot site should we buy?' })
    expect(created.status).toBe(201)
    expect(created.body.role).toBe('facilitator')
    expect(await count('room_members', 'room_id = $1 and user_id = $2 and role = \'facilitator\'', [created.body.id, user.id])).toBe(1)
    expect(await count('audit_log', 'room_id = $1 and action = \'room.created\' and actor_id = $2', [created.body.id, user.id])).toBe(1)
    const mine = await client.get('/api/rooms')
    expect(mine.body.map((r: { id: string }) => r.id)).toContain(created.body.id)
    expect(mine.body.find((r: { id: string }) => r.id === created.body.id).role).toBe('facilitator')
  })

  it('rejects a room without a title, writing nothing', async () => {
    const { client } = await newPerson(baseUrl, 'notitle')
    const before = await count('rooms')
    const answer = await client.post('/api/rooms', { title: '', question: 'Which depot site should we buy?' })
    expect(answer.status).toBe(400)
    expect(answer.body.data.fieldErrors.title).toBeTruthy()
    expect(await count('rooms')).toBe(before)
  })

  it.each([
    ['does not exist', '00000000-0000-4000-8000-000000000000'],
    ['is not a uuid', 'not-a-room'],
  ])('answers 404 for a room that %s', async (_label, id) => {
    const { client } = await newPerson(baseUrl, 'lost')
    expect((await client.get(`/api/rooms/${id}`)).status).toBe(404)
  })
})

/**
 * Every room role against every room action that has a route, with real sessions: the outcome must
 * follow the table in shared/roles.ts. Signed out → 401; not a member → 404 (rooms cannot be probed);
 * a member whose role lacks the action → 403.
 */
describe('the role table, enforced by the routes', () => {
  const routes: Partial<Record<RoomAction, (client: Client, roomId: string) => Promise<number>>> = {
    'room:view': async (c, id) => (await c.get(`/api/rooms/${id}`)).status,
    'room:manage': async (c, id) => (await c.patch(`/api/rooms/${id}`, { question: 'Which depot site should we buy this year?' })).status,
    'minutes:view': async (c, id) => (await c.get(`/api/rooms/${id}/audit`)).status,
  }
  const people: Record<string, Client> = {}
  let roomId = ''

  beforeAll(async () => {
    const facilitator = await newPerson(baseUrl, 'facilitator')
    roomId = (await facilitator.client.post('/api/rooms', { title: 'Role table room', question: 'Does the role table hold?' })).body.id
    people.facilitator = facilitator.client
    for (const role of ROOM_ROLES.filter(r => r !== 'facilitator')) {
      const person = await newPerson(baseUrl, role)
      // Invitations come later; membership is set up directly here.
      await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, person.user.id, role])
      people[role] = person.client
    }
    people.outsider = (await newPerson(baseUrl, 'outsider')).client
    people['signed-out'] = new Client(baseUrl)
  })

  const cases = (Object.keys(routes) as RoomAction[]).flatMap(action => [
    ...ROOM_ROLES.map(role => [action, role, roleAllows(role as RoomRole, action) ? 200 : 403] as const),
    [action, 'outsider', 404] as const,
    [action, 'signed-out', 401] as const,
  ])

  it.each(cases)('%s as %s → %i', async (action, who, expected) => {
    expect(await routes[action]!(people[who]!, roomId)).toBe(expected)
  })

  it('covers every action that has a route, and the table has a row for every role', () => {
    expect(Object.keys(routes).every(a => (ROOM_ACTIONS as readonly string[]).includes(a))).toBe(true)
    expect(ROOM_ROLES.every(role => roleAllows(role, 'room:view'))).toBe(true)
  })
})

describe('site administration', () => {
  it('lets only site administrators list people and change site roles', async () => {
    const admin = new Client(baseUrl)
    expect((await admin.post('/api/auth/sign-in', { email: 'admin@demo.counterpoise.example', password: 'kelderwick-demo' })).status).toBe(200)
    const { client: plain, user } = await newPerson(baseUrl, 'plain')
    expect((await plain.get('/api/admin/users')).status).toBe(403)
    expect((await new Client(baseUrl).get('/api/admin/users')).status).toBe(401)
    const list = await admin.get('/api/admin/users')
    expect(list.status).toBe(200)
    expect(list.body.some((u: { id: string }) => u.id === user.id)).toBe(true)
    expect(list.body[0]).not.toHaveProperty('passwordHash')

    expect((await plain.patch(`/api/admin/users/${user.id}`, { siteRole: 'admin' })).status).toBe(403)
    const promoted = await admin.patch(`/api/admin/users/${user.id}`, { siteRole: 'admin' })
    expect(promoted.status).toBe(200)
    expect(promoted.body.siteRole).toBe('admin')
    // The promoted user's old session is honoured at once: the role is read from the database.
    expect((await plain.get('/api/admin/users')).status).toBe(200)
    expect((await admin.patch(`/api/admin/users/${user.id}`, { siteRole: 'emperor' })).status).toBe(400)
    expect((await admin.patch(`/api/admin/users/${user.id}`, { siteRole: 'user' })).status).toBe(200)
    expect((await plain.get('/api/admin/users')).status).toBe(403)
  })
})

describe('the audit log', () => {
  it('refuses updates and deletes at the database', async () => {
    await expect(testDb().query('update audit_log set action = $1 where id = (select min(id) from audit_log)', ['rewritten'])).rejects.toThrow(/append-only/)
    await expect(testDb().query('delete from audit_log where id = (select min(id) from audit_log)')).rejects.toThrow(/append-only/)
  })
})
