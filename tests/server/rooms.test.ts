import { afterAll, describe, expect, inject, it } from 'vitest'
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

  // PostgreSQL refuses U+0000 in text: before the schemas refused it, this was a 500.
  it.each([
    ['a NUL in the title', { title: 'Depot\u0000 replacement', question: 'Which depot site should we buy?' }, 'title', 'character 6 is U+0000'],
    ['a line break in the title', { title: 'Depot\nreplacement', question: 'Which depot site should we buy?' }, 'title', 'must stay on one line'],
    ['an escape in the question', { title: 'Depot replacement', question: 'Which \u001b[31mdepot?' }, 'question', 'cannot contain control characters'],
  ])('refuses %s with the field and the character, writing nothing', async (_label, body, field, words) => {
    const { client } = await newPerson(baseUrl, 'control')
    const before = await count('rooms')
    const answer = await client.post('/api/rooms', body)
    expect(answer.status).toBe(400)
    expect(answer.body.data.fieldErrors[field]).toContain(words)
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

// The role table against the routes (every role, outsiders, signed out) lives in
// tests/server/accessMatrix.test.ts, for every route and socket event.

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
