import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { DEMO_ROOM_ID } from '../../server/database/demo'
import { ROOM_ROLES } from '../../shared/roles'
import { Client, newPerson } from '../support/client'
import { closeTestDb, count, testDb } from '../support/db'

const baseUrl = inject('baseUrl')
afterAll(closeTestDb)

const criteria = [
  { id: 'cost', name: 'Cost', unit: '£k', direction: 'min', highest: 100 },
  { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' },
]
const alternatives = [
  { id: 'a1', name: 'Plan A', scores: { cost: 50, reach: 900 } },
  { id: 'a2', name: 'Plan B', scores: { cost: 60, reach: 800 } }, // dominated by Plan A
  { id: 'a3', name: 'Plan C', scores: { cost: 120, reach: 2000 } }, // breaks the cost limit
  { id: 'a4', name: '=HYPERLINK("http://x.example")', scores: { cost: 30, reach: 400 } },
]

async function roomWithFacilitator() {
  const facilitator = await newPerson(baseUrl, 'ledger-facilitator')
  const room = await facilitator.client.post('/api/rooms', { title: 'Ledger room', question: 'Which plan?' })
  return { facilitator: facilitator.client, roomId: room.body.id as string }
}

describe('saving the ledger', () => {
  it('stores immutable numbered versions with a content hash, and explains the narrowing', async () => {
    const { facilitator, roomId } = await roomWithFacilitator()
    const first = await facilitator.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })
    expect(first.status).toBe(201)
    expect(first.body.version.number).toBe(1)
    expect(first.body.version.hash).toMatch(/^[0-9a-f]{64}$/)
    const verdicts = Object.fromEntries(first.body.analysis.verdicts.map((v: any) => [v.id, v]))
    expect(verdicts.a1.status).toBe('efficient')
    expect(verdicts.a2).toMatchObject({ status: 'dominated', dominatedBy: 'a1', worseOn: ['cost', 'reach'] })
    expect(verdicts.a3).toMatchObject({ status: 'infeasible', brokenLimits: [{ criterionId: 'cost', limit: 'highest', limitValue: 100, value: 120 }] })
    expect(first.body.analysis.counts).toEqual({ 'infeasible': 1, 'dominated': 1, 'weakly-efficient': 0, 'efficient': 2 })

    // The same content again is not a new version.
    const same = await facilitator.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 1, criteria, alternatives })
    expect(same.status).toBe(200)
    expect(same.body.version.number).toBe(1)

    const changed = await facilitator.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 1, criteria, alternatives: alternatives.slice(0, 2) })
    expect(changed.status).toBe(201)
    expect(changed.body.version.number).toBe(2)
    expect(changed.body.version.hash).not.toBe(first.body.version.hash)
    // Version 1 is untouched.
    const { rows } = await testDb().query('select hash, jsonb_array_length(alternatives) as n from ledger_versions where room_id = $1 order by number', [roomId])
    expect(rows).toEqual([{ hash: first.body.version.hash, n: 4 }, { hash: changed.body.version.hash, n: 2 }])
    expect(await count('audit_log', 'room_id = $1 and action = \'ledger.version-created\'', [roomId])).toBe(2)
  })

  it('refuses a save based on an old version (409), writing nothing', async () => {
    const { facilitator, roomId } = await roomWithFacilitator()
    await facilitator.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })
    const stale = await facilitator.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives: [] })
    expect(stale.status).toBe(409)
    expect(stale.body.message).toMatch(/version 1/)
    expect(await count('ledger_versions', 'room_id = $1', [roomId])).toBe(1)
  })

  it.each([
    ['a missing score', [{ id: 'x', name: 'X', scores: { cost: 1 } }], /Reach/, 'score-missing'],
    ['a duplicate name', [{ id: 'x', name: 'Same', scores: { cost: 1, reach: 1 } }, { id: 'y', name: 'same', scores: { cost: 2, reach: 2 } }], /same/i, 'alternative-name-duplicate'],
    ['a score for an unknown criterion', [{ id: 'x', name: 'X', scores: { cost: 1, reach: 1, speed: 3 } }], /speed/, 'score-unknown-criterion'],
  ])('answers %s with 422 naming alternative and criterion, writing nothing', async (_label, alts, message, code) => {
    const { facilitator, roomId } = await roomWithFacilitator()
    const answer = await facilitator.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives: alts })
    expect(answer.status).toBe(422)
    expect(answer.body.data.ledgerErrors[0].code).toBe(code)
    expect(answer.body.data.ledgerErrors[0].message).toMatch(message)
    expect(await count('ledger_versions', 'room_id = $1', [roomId])).toBe(0)
  })

  it.each([
    ['no criteria', { baseVersion: 0, criteria: [], alternatives: [] }, 'criteria'],
    ['a limit that is not a number', { baseVersion: 0, criteria: [{ ...criteria[0], highest: 'lots' }], alternatives: [] }, 'criteria.0.highest'],
    ['a reversed limit pair', { baseVersion: 0, criteria: [{ ...criteria[0], lowest: 10, highest: 5 }], alternatives: [] }, 'criteria.0.lowest'],
    ['a bad direction', { baseVersion: 0, criteria: [{ ...criteria[0], direction: 'up' }], alternatives: [] }, 'criteria.0.direction'],
    ['a score that is text', { baseVersion: 0, criteria, alternatives: [{ id: 'x', name: 'X', scores: { cost: '12', reach: 1 } }] }, 'alternatives.0.scores.cost'],
  ])('answers %s with 400 and the field, writing nothing', async (_label, body, field) => {
    const { facilitator, roomId } = await roomWithFacilitator()
    const answer = await facilitator.request('PUT', `/api/rooms/${roomId}/ledger`, body)
    expect(answer.status).toBe(400)
    expect(Object.keys(answer.body.data.fieldErrors)).toContain(field)
    expect(await count('ledger_versions', 'room_id = $1', [roomId])).toBe(0)
  })

  it('fixes the criteria once the room has left preparation, but lets alternatives be corrected', async () => {
    const { facilitator, roomId } = await roomWithFacilitator()
    await facilitator.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })
    await testDb().query('update rooms set status = \'live\' where id = $1', [roomId])
    const renamed = await facilitator.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 1, criteria: [{ ...criteria[0], name: 'Price' }, criteria[1]], alternatives })
    expect(renamed.status).toBe(409)
    const corrected = await facilitator.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 1, criteria, alternatives: alternatives.slice(1) })
    expect(corrected.status).toBe(201)
  })
})

describe('reading and exporting the ledger', () => {
  let roomId = ''
  const people: Record<string, Client> = {}
  beforeAll(async () => {
    const made = await roomWithFacilitator()
    roomId = made.roomId
    people.facilitator = made.facilitator
    await made.facilitator.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })
    for (const role of ROOM_ROLES.filter(r => r !== 'facilitator')) {
      const person = await newPerson(baseUrl, role)
      await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, person.user.id, role])
      people[role] = person.client
    }
    people.outsider = (await newPerson(baseUrl, 'outsider')).client
    people['signed-out'] = new Client(baseUrl)
  })

  it.each([
    ['facilitator', 200, 200], ['stakeholder', 200, 403], ['observer', 200, 403], ['secretary', 200, 403], ['outsider', 404, 404], ['signed-out', 401, 401],
  ])('%s: read %i, save %i', async (who, read, save) => {
    expect((await people[who]!.get(`/api/rooms/${roomId}/ledger`)).status).toBe(read)
    expect((await people[who]!.get(`/api/rooms/${roomId}/ledger/export.csv`)).status).toBe(read)
    expect((await people[who]!.get(`/api/rooms/${roomId}/ledger/export.json`)).status).toBe(read)
    const before = await count('ledger_versions', 'room_id = $1', [roomId])
    expect((await people[who]!.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: before, criteria, alternatives })).status).toBe(save)
    expect(await count('ledger_versions', 'room_id = $1', [roomId])).toBe(before)
  })

  it('exports CSV with units and statuses, safe against formula injection', async () => {
    const answer = await people.stakeholder!.get(`/api/rooms/${roomId}/ledger/export.csv`)
    expect(answer.headers.get('content-type')).toMatch(/text\/csv/)
    const text = answer.body as string
    // fetch's text() drops a byte-order mark, so look at the raw bytes for it.
    const raw = new Uint8Array(await (await fetch(`${baseUrl}/api/rooms/${roomId}/ledger/export.csv`, { headers: { cookie: people.stakeholder!.cookie } })).arrayBuffer())
    expect([...raw.slice(0, 3)]).toEqual([0xEF, 0xBB, 0xBF])
    expect(text).toContain('"Cost (£k)","Reach (people)","Status"')
    expect(text).toContain('"Plan B","60","800","dominated","dominated by Plan A, worse on Cost, Reach"')
    expect(text).toContain('"\'=HYPERLINK(""http://x.example"")"')
    expect(text).not.toMatch(/(^|,)"=/m)
  })

  it('exports JSON with the version, its hash and the verdicts', async () => {
    const answer = await people.observer!.get(`/api/rooms/${roomId}/ledger/export.json`)
    expect(answer.body.format).toBe('counterpoise-ledger')
    expect(answer.body.version.number).toBe(1)
    expect(answer.body.analysis.verdicts).toHaveLength(4)
    expect((await people.observer!.get(`/api/rooms/${roomId}/ledger/export.json?version=9`)).status).toBe(404)
    expect((await people.observer!.get(`/api/rooms/${roomId}/ledger/export.json?version=abc`)).status).toBe(400)
  })

  it('serves the demo room\'s ledger to its members', async () => {
    const observer = new Client(baseUrl)
    await observer.post('/api/auth/sign-in', { email: 'observer@demo.counterpoise.example', password: 'kelderwick-demo' })
    const answer = await observer.get(`/api/rooms/${DEMO_ROOM_ID}/ledger`)
    expect(answer.status).toBe(200)
    expect(answer.body.analysis.counts).toEqual({ 'infeasible': 1, 'dominated': 2, 'weakly-efficient': 1, 'efficient': 8 })
  })
})
