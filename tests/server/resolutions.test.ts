import { drizzle } from 'drizzle-orm/node-postgres'
import { createError } from 'h3'
import { afterAll, beforeAll, describe, expect, inject, it, vi } from 'vitest'
import * as schema from '../../server/database/schema'
import { Client, newPerson } from '../support/client'
import { closeTestDb, count, testDb } from '../support/db'

const baseUrl = inject('baseUrl')

// freezeResolution is what the minutes code calls when the secretary signs. It is called here,
// in the test process, on the test database, with the few server helpers it uses (Nitro
// auto-imports them in the app) given as globals. The server modules are imported by a computed
// path: they rely on Nitro's auto-imports, which the tests' type check does not declare.
const serverUtil = (name: string) => import(/* @vite-ignore */ new URL(`../../server/utils/${name}.ts`, import.meta.url).href)
const [{ audit }, { analysisOf, currentLedgerVersion }, { freezeResolution }] = await Promise.all([serverUtil('audit'), serverUtil('ledgerStore'), serverUtil('resolutions')]) as [
  { audit: unknown },
  { analysisOf: unknown, currentLedgerVersion: unknown },
  { freezeResolution: (resolutionId: string, actorId: string | null) => Promise<{ frozenAt: string | null }> },
]
vi.stubGlobal('useDb', () => drizzle(testDb(), { schema }))
vi.stubGlobal('createError', createError)
vi.stubGlobal('audit', audit)
vi.stubGlobal('analysisOf', analysisOf)
vi.stubGlobal('currentLedgerVersion', currentLedgerVersion)

const criteria = [
  { id: 'cost', name: 'Cost', unit: '£k', direction: 'min' as const, highest: 55 },
  { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' as const },
  { id: 'speed', name: 'Delay', unit: 'weeks', direction: 'min' as const },
]
// Worked by hand: "pricey" costs 70 £k, above the 55 £k cap, so it is outside limits. "worse"
// (52, 800, 14) is beaten by "broad" (50, 900, 12) on every criterion, so it is dominated, and
// worse than it on all three. cheap, broad and quick are each best on one criterion: efficient.
const alternatives = [
  { id: 'cheap', name: 'Cheap plan', scores: { cost: 10, reach: 100, speed: 10 } },
  { id: 'broad', name: 'Broad plan', scores: { cost: 50, reach: 900, speed: 12 } },
  { id: 'quick', name: 'Quick plan', scores: { cost: 40, reach: 300, speed: 2 } },
  { id: 'worse', name: 'Worse plan', scores: { cost: 52, reach: 800, speed: 14 } },
  { id: 'pricey', name: 'Pricey plan', scores: { cost: 70, reach: 2000, speed: 1 } },
]

let roomId = ''
const people: Record<string, Client> = {}
const path = () => `/api/rooms/${roomId}/resolutions`
const rowsOf = () => testDb().query('select * from resolutions where room_id = $1 order by recorded_at', [roomId]).then(r => r.rows)

beforeAll(async () => {
  const facilitator = await newPerson(baseUrl, 'resolve-facilitator')
  people.facilitator = facilitator.client
  roomId = (await facilitator.client.post('/api/rooms', { title: 'Deciding room', question: 'Which plan?' })).body.id
  expect((await facilitator.client.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })).status).toBe(201)
  for (const [label, role] of [['stakeholder', 'stakeholder'], ['observer', 'observer'], ['secretary', 'secretary']] as const) {
    const person = await newPerson(baseUrl, `resolve-${label}`)
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, person.user.id, role])
    people[label] = person.client
  }
  people.outsider = (await newPerson(baseUrl, 'resolve-outsider')).client
})

afterAll(async () => {
  await closeTestDb()
})

describe('recording the resolution', () => {
  const good = { alternativeId: 'quick', rationale: 'Fastest relief for the most exposed streets.', conditions: 'Review after one year.', dissent: 'The harbour wanted the broad plan.' }
  let first = ''

  it('lets only the facilitator record it', async () => {
    for (const who of ['stakeholder', 'observer', 'secretary']) {
      expect((await people[who]!.post(path(), good)).status).toBe(403)
    }
    expect((await people.outsider!.post(path(), good)).status).toBe(404)
    expect((await new Client(baseUrl).post(path(), good)).status).toBe(401)
    expect(await count('resolutions', 'room_id = $1', [roomId])).toBe(0)
  })

  it.each([
    ['no rationale', { rationale: '  ' }, 'rationale', /Say why/],
    ['an alternative the ledger does not have', { alternativeId: 'nowhere' }, 'alternativeId', /no alternative “nowhere”/],
    ['a ledger version the room does not have', { ledgerVersion: 9 }, 'ledgerVersion', /no ledger version 9/],
    ['a dominated choice without a justification', { alternativeId: 'worse' }, 'justification', /dominated by Broad plan — worse on Cost, Reach and Delay/],
    ['a dominated choice with a blank justification', { alternativeId: 'worse', justification: '   ' }, 'justification', /Write why/],
    ['a choice outside limits without a justification', { alternativeId: 'pricey' }, 'justification', /outside limits: Cost 70 £k > 55 £k/],
    ['an amendment of a record from nowhere', { amends: '00000000-0000-4000-8000-000000000000' }, 'amends', /not in this room/],
  ])('refuses %s with a field error and writes nothing', async (_label, change, field, message) => {
    const answer = await people.facilitator!.post(path(), { ...good, ...change })
    expect(answer.status).toBe(400)
    expect(answer.body.message).toMatch(message)
    expect(Object.keys(answer.body.data.fieldErrors)).toContain(field)
    expect(await count('resolutions', 'room_id = $1', [roomId])).toBe(0)
  })

  it('waits until the vote is closed', async () => {
    const vote = await people.facilitator!.post(`/api/rooms/${roomId}/votes`, {})
    expect(vote.status).toBe(201)
    const refused = await people.facilitator!.post(path(), good)
    expect(refused.status).toBe(409)
    expect(refused.body.message).toMatch(/vote is still open/)
    expect((await people.facilitator!.post(`/api/rooms/${roomId}/votes/${vote.body.id}/close`)).status).toBe(200)
  })

  it('records the decision with the engine\'s status of the chosen alternative; the room is decided', async () => {
    const answer = await people.facilitator!.post(path(), good)
    expect(answer.status).toBe(201)
    expect(answer.body).toMatchObject({ ...good, amends: null, ledgerVersion: 1, alternativeName: 'Quick plan', engineStatus: 'efficient', justification: null, recordedBy: 'Test resolve-facilitator', frozenAt: null })
    first = answer.body.id
    const { rows } = await testDb().query('select status from rooms where id = $1', [roomId])
    expect(rows[0].status).toBe('decided')
    expect(await count('audit_log', 'room_id = $1 and action = \'resolution.recorded\'', [roomId])).toBe(1)
    const list = await people.observer!.get(path())
    expect(list.status).toBe(200)
    expect(list.body.current.id).toBe(first)
    // A second record is refused: the recorded one is edited until it is signed.
    const again = await people.facilitator!.post(path(), good)
    expect(again.status).toBe(409)
    expect(again.body.message).toMatch(/edit it/)
    // An amendment of a record that is not signed yet is refused too.
    expect((await people.facilitator!.post(path(), { ...good, amends: first })).status).toBe(409)
    expect(await count('resolutions', 'room_id = $1', [roomId])).toBe(1)
  })

  it('edits the unsigned record; a dominated choice still needs its justification', async () => {
    expect((await people.observer!.patch(`${path()}/${first}`, { rationale: 'x' })).status).toBe(403)
    expect((await people.stakeholder!.patch(`${path()}/${first}`, { rationale: 'x' })).status).toBe(403)
    const before = await rowsOf()
    const refused = await people.facilitator!.patch(`${path()}/${first}`, { alternativeId: 'worse' })
    expect(refused.status).toBe(400)
    expect(refused.body.data.fieldErrors.justification).toMatch(/dominated by Broad plan/)
    expect((await people.facilitator!.patch(`${path()}/${first}`, {})).status).toBe(400)
    expect(await rowsOf()).toEqual(before)

    const edited = await people.facilitator!.patch(`${path()}/${first}`, { alternativeId: 'worse', justification: 'Only this one keeps the old slipway open.' })
    expect(edited.status).toBe(200)
    expect(edited.body).toMatchObject({ id: first, alternativeId: 'worse', engineStatus: 'dominated', engineWords: 'Dominated by Broad plan — worse on Cost, Reach and Delay', justification: 'Only this one keeps the old slipway open.', rationale: good.rationale })
    expect(await count('audit_log', 'room_id = $1 and action = \'resolution.edited\'', [roomId])).toBe(1)
  })

  it('freezes when signed: edits get 409, the database refuses changes, corrections are amendments', async () => {
    const frozen = await freezeResolution(first, null)
    expect(frozen.frozenAt).not.toBeNull()
    await expect(freezeResolution(first, null)).rejects.toMatchObject({ statusCode: 409 })

    const before = await rowsOf()
    const edit = await people.facilitator!.patch(`${path()}/${first}`, { rationale: 'Changed after signing.' })
    expect(edit.status).toBe(409)
    expect(edit.body.message).toMatch(/frozen/)
    await expect(testDb().query('update resolutions set rationale = $1 where id = $2', ['tampered', first])).rejects.toThrow(/frozen/)
    await expect(testDb().query('update resolutions set frozen_at = null where id = $1', [first])).rejects.toThrow(/frozen/)
    await expect(testDb().query('delete from resolutions where id = $1', [first])).rejects.toThrow(/frozen/)
    expect(await rowsOf()).toEqual(before)

    const plain = await people.facilitator!.post(path(), good)
    expect(plain.status).toBe(409)
    expect(plain.body.message).toMatch(/amendment/)

    const amendment = await people.facilitator!.post(path(), { ...good, amends: first, rationale: 'Corrected: the slipway stays open under the quick plan too.' })
    expect(amendment.status).toBe(201)
    expect(amendment.body).toMatchObject({ amends: first, alternativeId: 'quick', engineStatus: 'efficient', frozenAt: null })
    const list = await people.secretary!.get(path())
    expect(list.body.current.id).toBe(amendment.body.id)
    expect(list.body.resolutions.map((r: { id: string }) => r.id)).toEqual([amendment.body.id, first])
    // The original is untouched, and only the newest record can be amended.
    expect((await rowsOf())[0]).toEqual(before[0])
    expect((await people.facilitator!.post(path(), { ...good, amends: first })).status).toBe(409)
    expect(await count('audit_log', 'room_id = $1 and action in (\'resolution.frozen\', \'resolution.amended\')', [roomId])).toBe(2)
  })
})
