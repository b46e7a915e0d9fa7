/**
 * A targets round (reference-point mode) against the built server: stakeholders send a target
 * per criterion over the socket; bad targets are refused with the criterion named and nothing
 * stored; a resend is recognised; the results name each favourite by the achievement function,
 * including an efficient alternative that no weighting of sliders can favour.
 *
 * The sea-front ledger (as in tests/e2e/weigh-console.spec.ts), normalised over its efficient
 * set (1 = best): cost North Wall 1, Dune Nourishment 0.5, Tidal Barrier 0; homes 0, 0.25, 1.
 * Dune Nourishment lies below the chord between the other two, so it is unsupported.
 */
import { randomUUID } from 'node:crypto'
import { io as connect, type Socket } from 'socket.io-client'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Ack, ClientToServerEvents, JoinedRoom, MySubmission, ServerToClientEvents } from '../../shared/types/realtime'
import { newPerson, type Client } from '../support/client'
import { closeTestDb, count, testDb } from '../support/db'

const baseUrl = inject('baseUrl')
type RoomSocket = Socket<ServerToClientEvents, ClientToServerEvents>

const criteria = [
  { id: 'cost', name: 'Capital cost', unit: '£m', direction: 'min', highest: 30, precision: 1 },
  { id: 'homes', name: 'Homes protected', unit: 'homes', direction: 'max', precision: 0 },
]
const alternatives = [
  { id: 'wall', name: 'North Wall', scores: { cost: 10, homes: 100 } },
  { id: 'dunes', name: 'Dune Nourishment', scores: { cost: 20, homes: 150 } },
  { id: 'barrier', name: 'Tidal Barrier', scores: { cost: 30, homes: 300 } },
  { id: 'reef', name: 'Offshore Reef', scores: { cost: 31.5, homes: 400 } },
  { id: 'groynes', name: 'Groyne Field', scores: { cost: 25, homes: 120 } },
  { id: 'retreat', name: 'Managed Retreat', scores: { cost: 10, homes: 90 } },
]

const sockets: RoomSocket[] = []
function socketFor(client: Client) {
  const socket: RoomSocket = connect(baseUrl, { extraHeaders: { cookie: client.cookie }, transports: ['websocket'], reconnection: false, forceNew: true })
  sockets.push(socket)
  return socket
}
const connected = (socket: RoomSocket) => new Promise<void>((resolve, reject) => {
  if (socket.connected) return resolve()
  socket.once('connect', () => resolve())
  socket.once('connect_error', reject)
})
function emitAck<T>(socket: RoomSocket, event: 'room:join' | 'weights:submit', body: unknown): Promise<Ack<T>> {
  return new Promise(resolve => (socket.emit as (...args: unknown[]) => void)(event, body, resolve))
}

let roomId = ''
let weighingId = ''
const people: Record<string, Client> = {}

beforeAll(async () => {
  const facilitator = await newPerson(baseUrl, 'targets-facilitator')
  people.facilitator = facilitator.client
  roomId = (await facilitator.client.post('/api/rooms', { title: 'Sea-front targets', question: 'Which defence?' })).body.id
  expect((await facilitator.client.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })).status).toBe(201)
  for (const label of ['t1', 't2', 't3']) {
    const person = await newPerson(baseUrl, label)
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, person.user.id, 'stakeholder'])
    people[label] = person.client
  }
})

afterAll(async () => {
  for (const socket of sockets) socket.disconnect()
  await closeTestDb()
})

describe('a targets round', () => {
  it('opens with the targets input style', async () => {
    const opened = await people.facilitator!.post(`/api/rooms/${roomId}/weighings`, { inputStyle: 'aspirations', showNames: true })
    expect(opened.status).toBe(201)
    expect(opened.body).toMatchObject({ number: 1, status: 'open', inputStyle: 'aspirations' })
    weighingId = opened.body.id
    expect((await people.facilitator!.post(`/api/rooms/${roomId}/weighings`, { inputStyle: 'targets' })).status).toBe(400)
  })

  it.each([
    ['a target far above the shortlist', { aspirations: [100, 150] }, /“Capital cost” \(100 £m\) is outside the accepted range -10 £m to 50 £m/],
    ['a target far below the shortlist', { aspirations: [20, -500] }, /“Homes protected” \(-500 homes\) is outside/],
    ['a missing target', { aspirations: [20] }, /Expected 2 targets/],
    ['a target that is not a number', { aspirations: [20, 'many'] }, /Targets must be numbers/],
    ['a target sent as NaN (null over JSON)', { aspirations: [Number.NaN, 150] }, /Targets must be numbers/],
    ['weights instead of targets', { weights: [1, 1] }, /asks for a target per criterion/],
    ['a ranking instead of targets', { ranking: ['cost', 'homes'] }, /asks for a target per criterion/],
    ['both weights and targets', { weights: [1, 1], aspirations: [20, 150] }, /either/],
  ])('refuses %s with a 400 naming what is wrong, and stores nothing', async (_label, change, message) => {
    const phone = socketFor(people.t1!)
    await connected(phone)
    const failure = new Promise(resolve => phone.once('failure', resolve))
    const ack = await emitAck(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), ...change })
    expect(ack).toMatchObject({ ok: false, status: 400 })
    expect((ack as { message: string }).message).toMatch(message)
    expect(await failure).toMatchObject({ event: 'weights:submit', status: 400 })
    expect(await count('submissions', 'weighing_id = $1', [weighingId])).toBe(0)
  })

  it('stores targets before acknowledging them, with the equal weights of the achievement function, and recognises a resend', async () => {
    const phone = socketFor(people.t1!)
    await connected(phone)
    expect((await emitAck<JoinedRoom>(phone, 'room:join', { roomId })).ok).toBe(true)
    const key = randomUUID()
    const ack = await emitAck<MySubmission>(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: key, aspirations: [20, 150] })
    expect(ack).toMatchObject({ ok: true, data: { aspirations: [20, 150], weights: [0.5, 0.5], ranking: null, revision: 1 } })
    const { rows } = await testDb().query('select aspirations, weights, revision from submissions where weighing_id = $1', [weighingId])
    expect(rows).toEqual([{ aspirations: [20, 150], weights: [0.5, 0.5], revision: 1 }])

    // The same submission again (a phone resending after a reconnect): the stored one, unchanged.
    const again = await emitAck<MySubmission>(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: key, aspirations: [20, 150] })
    expect(again).toMatchObject({ ok: true, data: { revision: 1, idempotencyKey: key } })
    expect(await count('submissions', 'weighing_id = $1', [weighingId])).toBe(1)

    // A reloaded phone gets its targets back when it joins.
    const rejoined = await emitAck<JoinedRoom>(socketFor(people.t1!), 'room:join', { roomId })
    expect(rejoined).toMatchObject({ ok: true, data: { mine: { aspirations: [20, 150], idempotencyKey: key } } })
  })

  it('takes the other stakeholders\' targets', async () => {
    for (const [who, targets] of [['t2', [12, 120]], ['t3', [22, 160]]] as const) {
      const phone = socketFor(people[who]!)
      await connected(phone)
      expect(await emitAck(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), aspirations: targets })).toMatchObject({ ok: true })
    }
    expect(await count('submissions', 'weighing_id = $1', [weighingId])).toBe(3)
  })

  it('names each favourite by the achievement function, flags the unsupported ones, and the group\'s median targets', async () => {
    expect((await people.facilitator!.post(`/api/rooms/${roomId}/weighings/${weighingId}/close`)).status).toBe(200)
    expect((await people.facilitator!.post(`/api/rooms/${roomId}/weighings/${weighingId}/reveal`)).status).toBe(200)
    const results = await people.t2!.get(`/api/rooms/${roomId}/weighings/${weighingId}/results`)
    expect(results.status).toBe(200)
    // Worked by hand (normalised targets r; largest shortfall max_k (r_k − v_k) per alternative):
    //   t1 (20 £m, 150): r = (0.5, 0.25): Wall 0.25, Dunes 0, Barrier 0.5 → Dune Nourishment.
    //   t2 (12 £m, 120): r = (0.9, 0.1): Wall 0.1, Dunes 0.4, Barrier 0.9 → North Wall.
    //   t3 (22 £m, 160): r = (0.4, 0.3): Wall 0.3, Dunes 0.05, Barrier 0.4 → Dune Nourishment.
    expect(results.body.weightings.map((w: { label: string, favourites: string[], runnersUp: string[], aspirations: number[], unsupportedFavourites: string[] }) =>
      [w.favourites, w.runnersUp, w.aspirations, w.unsupportedFavourites])).toEqual([
      [['dunes'], ['wall'], [20, 150], ['dunes']],
      [['wall'], ['dunes'], [12, 120], []],
      [['dunes'], ['wall'], [22, 160], ['dunes']],
    ])
    const dunes = results.body.alternatives.find((a: { id: string }) => a.id === 'dunes')
    expect(dunes).toMatchObject({ supported: false, favouredBy: 2 })
    // Weight-based group rules do not apply; the median targets (20, 150) favour Dune Nourishment.
    expect(results.body.group).toEqual([])
    expect(results.body.groupTargets).toEqual({
      rule: 'median-targets',
      aspirations: [20, 150],
      favourites: ['dunes'],
      runnersUp: ['wall'],
      unsupportedFavourites: ['dunes'],
      agreement: 2 / 3,
    })
    expect(results.body.criteria[0]).toMatchObject({ id: 'cost', unit: '£m', precision: 1 })
  })

  it('refuses targets in a sliders weighing', async () => {
    const opened = await people.facilitator!.post(`/api/rooms/${roomId}/weighings`, { inputStyle: 'sliders' })
    expect(opened.status).toBe(201)
    const phone = socketFor(people.t1!)
    await connected(phone)
    const ack = await emitAck(phone, 'weights:submit', { roomId, weighingId: opened.body.id, idempotencyKey: randomUUID(), aspirations: [20, 150] })
    expect(ack).toMatchObject({ ok: false, status: 400 })
    expect((ack as { message: string }).message).toMatch(/asks for weights, not targets/)
    expect(await count('submissions', 'weighing_id = $1', [opened.body.id])).toBe(0)
  })
})
