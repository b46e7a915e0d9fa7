import { createHash, randomUUID } from 'node:crypto'
import { io as connect, type Socket } from 'socket.io-client'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Ack, ClientToServerEvents, JoinedRoom, MySubmission, RoomLiveState, ServerToClientEvents } from '../../shared/types/realtime'
import { analyseLedger } from '../../shared/utils/ledger'
import { weightedSumFavourite } from '../../shared/utils/scalarise'
import { Client, newPerson } from '../support/client'
import { closeTestDb, count, testDb } from '../support/db'
import { startBuiltServer, type RunningServer } from '../support/server'

const baseUrl = inject('baseUrl')
type RoomSocket = Socket<ServerToClientEvents, ClientToServerEvents>

const criteria = [
  { id: 'cost', name: 'Cost', unit: '£k', direction: 'min' as const },
  { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' as const },
  { id: 'speed', name: 'Delay', unit: 'weeks', direction: 'min' as const },
]
const alternatives = [
  { id: 'cheap', name: 'Cheap plan', scores: { cost: 10, reach: 100, speed: 10 } },
  { id: 'broad', name: 'Broad plan', scores: { cost: 50, reach: 900, speed: 12 } },
  { id: 'quick', name: 'Quick plan', scores: { cost: 40, reach: 300, speed: 2 } },
  { id: 'worse', name: 'Worse plan', scores: { cost: 60, reach: 800, speed: 14 } },
]

const sockets: RoomSocket[] = []
function socketFor(client: Client, url = baseUrl, transports: ('websocket' | 'polling')[] = ['websocket']) {
  const socket: RoomSocket = connect(url, { extraHeaders: { cookie: client.cookie }, transports, reconnection: false, forceNew: true })
  sockets.push(socket)
  return socket
}
const connected = (socket: RoomSocket) => new Promise<void>((resolve, reject) => {
  if (socket.connected) return resolve()
  socket.once('connect', () => resolve())
  socket.once('connect_error', reject)
})
function emitAck<T>(socket: RoomSocket, event: 'room:join' | 'weights:submit', body: any): Promise<Ack<T>> {
  return new Promise(resolve => (socket.emit as any)(event, body, resolve))
}
/** The next state whose submitted count satisfies `test`. */
function nextState(socket: RoomSocket, test: (s: RoomLiveState) => boolean) {
  return new Promise<RoomLiveState>((resolve) => {
    const listener = (state: RoomLiveState) => {
      if (!test(state)) return
      socket.off('room:state', listener)
      resolve(state)
    }
    socket.on('room:state', listener)
  })
}

/** `promise`, or a failure naming what did not happen within `ms`. */
function within<T>(promise: Promise<T>, ms: number, what: string) {
  return Promise.race([promise, new Promise<never>((_, reject) => setTimeout(() => reject(new Error(`no ${what} within ${ms} ms`)), ms))])
}
const nextEvent = <E extends keyof ServerToClientEvents>(socket: RoomSocket, event: E, test: (...args: Parameters<ServerToClientEvents[E]>) => boolean = () => true) =>
  new Promise<Parameters<ServerToClientEvents[E]>[0]>((resolve) => {
    const listener = ((...args: Parameters<ServerToClientEvents[E]>) => {
      if (!test(...args)) return
      socket.off(event, listener as never)
      resolve(args[0])
    }) as never
    socket.on(event, listener)
  })

/** A room with the ledger above and the given members (label → role), each a signed-in person. */
async function newRoom(title: string, members: Record<string, 'facilitator' | 'stakeholder' | 'observer' | 'secretary'>) {
  const owner = await newPerson(baseUrl, `${title}-owner`)
  const id = (await owner.client.post('/api/rooms', { title, question: 'Which plan?' })).body.id as string
  expect((await owner.client.request('PUT', `/api/rooms/${id}/ledger`, { baseVersion: 0, criteria, alternatives })).status).toBe(201)
  const who: Record<string, { client: Client, id: string, name: string }> = { owner: { client: owner.client, id: owner.user.id, name: owner.user.displayName } }
  for (const [label, role] of Object.entries(members)) {
    const person = await newPerson(baseUrl, `${title}-${label}`)
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [id, person.user.id, role])
    who[label] = { client: person.client, id: person.user.id, name: person.user.displayName }
  }
  return { id, who }
}

let roomId = ''
const people: Record<string, Client> = {}
const userIds: Record<string, string> = {}
let extraServer: RunningServer | undefined

beforeAll(async () => {
  const facilitator = await newPerson(baseUrl, 'weigh-facilitator')
  people.facilitator = facilitator.client
  roomId = (await facilitator.client.post('/api/rooms', { title: 'Weighing room', question: 'Which plan?' })).body.id
  expect((await facilitator.client.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })).status).toBe(201)
  for (const [label, role] of [['s1', 'stakeholder'], ['s2', 'stakeholder'], ['s3', 'stakeholder'], ['observer', 'observer'], ['secretary', 'secretary']] as const) {
    const person = await newPerson(baseUrl, label)
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, person.user.id, role])
    people[label] = person.client
    userIds[label] = person.user.id
  }
  people.outsider = (await newPerson(baseUrl, 'weigh-outsider')).client
})

afterAll(async () => {
  for (const socket of sockets) socket.disconnect()
  await extraServer?.stop()
  await closeTestDb()
})

describe('a weighing round over sockets', () => {
  let weighingId = ''

  it('refuses a socket without a session', async () => {
    const anonymous: RoomSocket = connect(baseUrl, { transports: ['websocket'], reconnection: false, forceNew: true })
    sockets.push(anonymous)
    await expect(connected(anonymous)).rejects.toThrow(/Sign in first/)
  })

  it('lets only the facilitator open a weighing', async () => {
    for (const who of ['s1', 'observer', 'secretary']) {
      expect((await people[who]!.post(`/api/rooms/${roomId}/weighings`, { inputStyle: 'sliders' })).status).toBe(403)
    }
    expect((await people.outsider!.post(`/api/rooms/${roomId}/weighings`, {})).status).toBe(404)
    expect((await new Client(baseUrl).post(`/api/rooms/${roomId}/weighings`, {})).status).toBe(401)
    expect(await count('weighings', 'room_id = $1', [roomId])).toBe(0)

    const opened = await people.facilitator!.post(`/api/rooms/${roomId}/weighings`, { inputStyle: 'sliders', showNames: true })
    expect(opened.status).toBe(201)
    expect(opened.body).toMatchObject({ number: 1, status: 'open', ledgerVersion: 1 })
    weighingId = opened.body.id
    expect((await people.facilitator!.post(`/api/rooms/${roomId}/weighings`, {})).status).toBe(409)
    const { rows } = await testDb().query('select status from rooms where id = $1', [roomId])
    expect(rows[0].status).toBe('live')
  })

  it('acknowledges a submission only once it is stored, and the gallery sees the count', async () => {
    const gallery = socketFor(people.observer!)
    const phone = socketFor(people.s1!)
    await Promise.all([connected(gallery), connected(phone)])
    const galleryJoin = await emitAck<JoinedRoom>(gallery, 'room:join', { roomId })
    expect(galleryJoin).toMatchObject({ ok: true, data: { role: 'observer', state: { submitted: 0, eligible: 3 } } })
    const phoneJoin = await emitAck<JoinedRoom>(phone, 'room:join', { roomId })
    expect(phoneJoin).toMatchObject({ ok: true, data: { role: 'stakeholder', mine: null } })

    const seen = nextState(gallery, s => s.submitted === 1)
    const key = randomUUID()
    const ack = await emitAck<MySubmission>(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: key, weights: [2, 1, 1] })
    expect(ack.ok).toBe(true)
    // Stored before the acknowledgement arrived.
    const { rows } = await testDb().query('select weights, revision from submissions where weighing_id = $1', [weighingId])
    expect(rows).toHaveLength(1)
    expect(rows[0].weights).toEqual([0.5, 0.25, 0.25])
    expect((await seen).submitted).toBe(1)

    // The same submission sent again (a reconnecting phone) is recognised, not counted twice.
    const again = await emitAck<MySubmission>(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: key, weights: [2, 1, 1] })
    expect(again).toMatchObject({ ok: true, data: { revision: 1 } })
    expect(await count('submissions', 'weighing_id = $1', [weighingId])).toBe(1)

    // A new submission replaces the earlier one.
    const revisedKey = randomUUID()
    const revised = await emitAck<MySubmission>(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: revisedKey, weights: [0, 1, 0] })
    expect(revised).toMatchObject({ ok: true, data: { revision: 2, weights: [0, 1, 0] } })
    expect(await count('submissions', 'weighing_id = $1', [weighingId])).toBe(1)

    // The first one arriving late (held up somewhere) does not bring its weights back: it is
    // answered as replaced, with the later submission, and nothing is stored.
    const late = await emitAck<MySubmission>(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: key, weights: [2, 1, 1] })
    expect(late).toMatchObject({ ok: true, data: { superseded: true, idempotencyKey: revisedKey, revision: 2, weights: [0, 1, 0] } })
    const { rows: after } = await testDb().query('select weights, revision, idempotency_key from submissions where weighing_id = $1', [weighingId])
    expect(after).toEqual([{ weights: [0, 1, 0], revision: 2, idempotency_key: revisedKey }])
  })

  it.each([
    ['a negative weight', { weights: [-1, 1, 1] }, 400, /negative/],
    ['a weight that is not a number', { weights: [null, 1, 1] }, 400, /number/],
    ['the wrong number of weights', { weights: [1, 1] }, 400, /Expected 3 weights/],
    ['all weights zero', { weights: [0, 0, 0] }, 400, /zero|positive/i],
    ['both weights and a ranking', { weights: [1, 1, 1], ranking: ['cost', 'reach', 'speed'] }, 400, /either/],
    ['a ranking missing a criterion', { weights: undefined, ranking: ['cost', 'reach'] }, 400, /speed/],
    ['a ranking naming one twice', { weights: undefined, ranking: ['cost', 'cost', 'reach', 'speed'] }, 400, /twice/],
    ['another room', { roomId: '00000000-0000-4000-8000-000000000000' }, 404, /not a member/],
    ['a weighing id that is not this room\'s', { weighingId: '00000000-0000-4000-8000-000000000000' }, 404, /No such weighing/],
  ])('refuses %s with a clear answer and changes nothing', async (_label, change, status, message) => {
    const phone = socketFor(people.s2!)
    await connected(phone)
    const failure = new Promise(resolve => phone.once('failure', resolve))
    const before = await count('submissions')
    const ack = await emitAck(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), weights: [1, 1, 1], ...change })
    expect(ack).toMatchObject({ ok: false, status })
    expect((ack as { message: string }).message).toMatch(message)
    expect(await failure).toMatchObject({ event: 'weights:submit', status })
    expect(await count('submissions')).toBe(before)
  })

  it('takes a ranking and turns it into rank-order centroid weights', async () => {
    const phone = socketFor(people.s2!)
    await connected(phone)
    const ack = await emitAck<MySubmission>(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), ranking: ['reach', ['cost', 'speed']] })
    expect(ack.ok).toBe(true)
    // ROC for 3: 11/18, 5/18, 2/18; cost and speed share positions 2 and 3: (5/18 + 2/18)/2 each.
    const weights = (ack as { data: MySubmission }).data.weights
    expect(weights[1]).toBeCloseTo(11 / 18, 12)
    expect(weights[0]).toBeCloseTo(7 / 36, 12)
    expect(weights[2]).toBeCloseTo(7 / 36, 12)
  })

  it('refuses weights from an observer and from a room the socket never joined', async () => {
    const gallery = socketFor(people.observer!)
    await connected(gallery)
    const ack = await emitAck(gallery, 'weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), weights: [1, 1, 1] })
    expect(ack).toMatchObject({ ok: false, status: 403 })
    const outsider = socketFor(people.outsider!)
    await connected(outsider)
    expect(await emitAck(outsider, 'room:join', { roomId })).toMatchObject({ ok: false, status: 404 })
    expect(await emitAck(outsider, 'weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), weights: [1, 1, 1] })).toMatchObject({ ok: false, status: 404 })
  })

  it('answers a flood of submissions from one socket with 429 beyond the limit, and stores at most one revision per accepted one', async () => {
    const phone = socketFor(people.s2!)
    await connected(phone)
    const revisionOfS2 = async () => (await testDb().query('select revision from submissions where weighing_id = $1 and user_id = $2', [weighingId, userIds.s2])).rows.map(r => r.revision as number)
    const [before] = await revisionOfS2()
    expect(before).toBeGreaterThanOrEqual(1)
    const audited = () => count('audit_log', 'room_id = $1 and action = \'weights.submitted\'', [roomId])
    const auditBefore = await audited()
    const answers = await Promise.all(Array.from({ length: 60 }, (_, i) => emitAck<MySubmission>(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), weights: [1, 1 + i, 1] })))
    const accepted = answers.filter(a => a.ok).length
    // SOCKET_EVENT_LIMIT in server/utils/socketHandlers.ts: 40 events per 10 s.
    expect(accepted).toBeLessThanOrEqual(40)
    expect(accepted).toBeGreaterThan(0)
    expect(answers.filter(a => !a.ok).every(a => !a.ok && a.status === 429)).toBe(true)
    expect(answers.filter(a => !a.ok)).toHaveLength(60 - accepted)
    // One row per person; one revision and one audit entry per accepted submission, none for a refused one.
    expect(await revisionOfS2()).toEqual([before! + accepted])
    expect(await audited()).toBe(auditBefore + accepted)
    expect((await people.s2!.get('/api/health')).status).toBe(200)
  })

  it('slows down a socket that floods events, without crashing or storing anything extra', async () => {
    const phone = socketFor(people.s3!)
    await connected(phone)
    const answers = await Promise.all(Array.from({ length: 60 }, () => emitAck(phone, 'room:join', { roomId })))
    expect(answers.filter(a => a.ok).length).toBeLessThanOrEqual(40)
    expect(answers.some(a => !a.ok && a.status === 429)).toBe(true)
    expect((await people.s3!.get('/api/health')).status).toBe(200)
  })

  it('refuses a submission after closing; results appear only after the reveal, with each weighting\'s favourite', async () => {
    const phone = socketFor(people.s3!, baseUrl, ['polling'])
    await connected(phone)
    expect((await emitAck(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), weights: [1, 0, 1] })).ok).toBe(true)

    expect((await people.s1!.post(`/api/rooms/${roomId}/weighings/${weighingId}/close`)).status).toBe(403)
    const closed = await people.facilitator!.post(`/api/rooms/${roomId}/weighings/${weighingId}/close`)
    expect(closed.body.status).toBe('closed')
    const late = await emitAck(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), weights: [1, 1, 1] })
    expect(late).toMatchObject({ ok: false, status: 409 })
    expect((await people.s1!.get(`/api/rooms/${roomId}/weighings/${weighingId}/results`)).status).toBe(409)

    const revealed = await people.facilitator!.post(`/api/rooms/${roomId}/weighings/${weighingId}/reveal`)
    expect(revealed.body.status).toBe('revealed')
    const results = await people.observer!.get(`/api/rooms/${roomId}/weighings/${weighingId}/results`)
    expect(results.status).toBe(200)
    expect(results.body.weightings).toHaveLength(3)
    // Each favourite agrees with the engine run here on the same ledger and weights.
    const analysis = analyseLedger(criteria, alternatives)
    const { rows } = await testDb().query('select s.weights, u.display_name from submissions s join users u on u.id = s.user_id where weighing_id = $1 order by submitted_at', [weighingId])
    rows.forEach((row, i) => {
      expect(results.body.weightings[i].label).toBe(row.display_name) // names shown: the weighing was opened with showNames
      expect(results.body.weightings[i].favourites).toEqual(weightedSumFavourite(analysis, row.weights).winners)
    })
    // Reach alone favours the broad plan; the dominated plan is never a candidate.
    expect(results.body.weightings[0].favourites).toEqual(['broad'])
    expect(results.body.alternatives.map((a: { id: string }) => a.id)).not.toContain('worse')
    const total = results.body.alternatives.reduce((sum: number, a: { favouredBy: number }) => sum + a.favouredBy, 0)
    expect(total).toBeCloseTo(3, 12)
    expect(results.body.group.map((g: { rule: string }) => g.rule)).toEqual(['mean', 'geometric-mean', 'median'])
    expect(await count('audit_log', 'room_id = $1 and action in (\'weighing.opened\', \'weighing.closed\', \'weighing.revealed\', \'weights.submitted\')', [roomId])).toBeGreaterThanOrEqual(7)
  }, 30_000)

  it('disconnects a user\'s sockets when they sign out', async () => {
    const person = await newPerson(baseUrl, 'leaver')
    const socket = socketFor(person.client)
    await connected(socket)
    const gone = new Promise(resolve => socket.once('disconnect', resolve))
    await person.client.post('/api/auth/sign-out')
    expect(await gone).toBe('io server disconnect')
  })
})

describe('two server processes on one database', () => {
  it('carry a submission on one process to a gallery on the other', async () => {
    extraServer = await startBuiltServer({ ...process.env, BASE_URL: '' })
    expect(extraServer.baseUrl).not.toBe(baseUrl)
    const opened = await people.facilitator!.post(`/api/rooms/${roomId}/weighings`, { inputStyle: 'sliders' })
    expect(opened.status).toBe(201)
    const gallery = socketFor(people.observer!, extraServer.baseUrl)
    const phone = socketFor(people.s1!, baseUrl)
    await Promise.all([connected(gallery), connected(phone)])
    expect((await emitAck(gallery, 'room:join', { roomId })).ok).toBe(true)
    expect((await emitAck(phone, 'room:join', { roomId })).ok).toBe(true)
    const seen = nextState(gallery, s => s.weighing?.id === opened.body.id && s.submitted === 1)
    expect((await emitAck(phone, 'weights:submit', { roomId, weighingId: opened.body.id, idempotencyKey: randomUUID(), weights: [1, 1, 1] })).ok).toBe(true)
    expect((await seen).submitted).toBe(1)
  }, 30_000)
})

describe('membership changes reach the live sockets, in every process', () => {
  it('a removed member stops hearing the room, a demoted facilitator stops seeing names, a promoted one sees them after joining again', async () => {
    extraServer ??= await startBuiltServer({ ...process.env, BASE_URL: '' })
    const other = extraServer.baseUrl
    const { id, who } = await newRoom('members', { co: 'facilitator', leaving: 'stakeholder', rising: 'stakeholder', staying: 'stakeholder' })
    const opened = await who.owner!.client.post(`/api/rooms/${id}/weighings`, { inputStyle: 'sliders', showNames: true })
    expect(opened.status).toBe(201)
    const weighingId = opened.body.id as string
    // The changes go through the first process; the sockets that must feel them sit on the second.
    const watch = socketFor(who.owner!.client, other)
    const co = socketFor(who.co!.client, other)
    const leaving = socketFor(who.leaving!.client, other)
    const rising = socketFor(who.rising!.client, baseUrl)
    const staying = socketFor(who.staying!.client, baseUrl)
    await Promise.all([watch, co, leaving, rising, staying].map(connected))
    for (const socket of [watch, co, leaving, rising, staying]) expect((await emitAck<JoinedRoom>(socket, 'room:join', { roomId: id })).ok).toBe(true)
    const heardByLeaving: RoomLiveState[] = []
    leaving.on('room:state', state => heardByLeaving.push(state))
    const namesSeenByCo: string[][] = []
    co.on('weighing:names', list => namesSeenByCo.push(list.names))
    const submit = (socket: RoomSocket, weights: number[]) => emitAck<MySubmission>(socket, 'weights:submit', { roomId: id, weighingId, idempotencyKey: randomUUID(), weights })

    // Removed: told to join again (and refused), and the room hears there are now two who may weigh.
    const leavingTold = nextEvent(leaving, 'room:membership', body => body.roomId === id)
    const fewer = nextState(watch, s => s.eligible === 2)
    expect((await who.owner!.client.request('DELETE', `/api/rooms/${id}/members/${who.leaving!.id}`)).status).toBe(200)
    await within(leavingTold, 5000, 'room:membership for the removed member')
    await within(fewer, 5000, 'room state with 2 eligible')
    expect(await emitAck(leaving, 'room:join', { roomId: id })).toMatchObject({ ok: false, status: 404 })
    const afterStaying = nextState(watch, s => s.submitted === 1)
    const namesAfterStaying = nextEvent(watch, 'weighing:names', list => list.names.length === 1)
    expect((await submit(staying, [1, 0, 0])).ok).toBe(true)
    await within(afterStaying, 5000, 'room state after a submission')
    expect(await within(namesAfterStaying, 5000, 'names for the facilitator')).toMatchObject({ names: [who.staying!.name] })

    // Demoted: names go on reaching the facilitator who stayed, no longer the demoted one.
    const coTold = nextEvent(co, 'room:membership', body => body.roomId === id)
    expect((await who.owner!.client.patch(`/api/rooms/${id}/members/${who.co!.id}`, { role: 'observer' })).body).toMatchObject({ role: 'observer', changed: true })
    await within(coTold, 5000, 'room:membership for the demoted facilitator')
    namesSeenByCo.length = 0
    const namesAfterRising = nextEvent(watch, 'weighing:names', list => list.names.length === 2)
    expect((await submit(rising, [0, 1, 0])).ok).toBe(true)
    expect((await within(namesAfterRising, 5000, 'names after the second submission')).names).toContain(who.rising!.name)
    const coAgain = await emitAck<JoinedRoom>(co, 'room:join', { roomId: id })
    expect(coAgain).toMatchObject({ ok: true, data: { role: 'observer', state: { submitted: 2 } } })

    // Promoted: after joining again, the names come, and keep coming.
    const risingTold = nextEvent(rising, 'room:membership', body => body.roomId === id)
    const fewerStill = nextState(watch, s => s.eligible === 1)
    expect((await who.owner!.client.patch(`/api/rooms/${id}/members/${who.rising!.id}`, { role: 'facilitator' })).status).toBe(200)
    await within(risingTold, 5000, 'room:membership for the promoted member')
    await within(fewerStill, 5000, 'room state with 1 eligible')
    const firstNames = nextEvent(rising, 'weighing:names')
    expect(await emitAck<JoinedRoom>(rising, 'room:join', { roomId: id })).toMatchObject({ ok: true, data: { role: 'facilitator' } })
    expect((await within(firstNames, 5000, 'names for the promoted facilitator')).names.slice().sort()).toEqual([who.rising!.name, who.staying!.name].sort())
    const liveNames = nextEvent(rising, 'weighing:names')
    const lastState = nextState(watch, s => s.submitted === 2 && s.eligible === 1)
    expect((await submit(staying, [0, 0, 1])).ok).toBe(true)
    expect((await within(liveNames, 5000, 'live names for the promoted facilitator')).weighingId).toBe(weighingId)
    await within(lastState, 5000, 'room state after the last submission')
    // The same broadcasts reached the watching facilitator on the same process: give stragglers a moment.
    await new Promise(resolve => setTimeout(resolve, 300))
    expect(heardByLeaving.filter(s => s.submitted > 0)).toEqual([])
    expect(namesSeenByCo).toEqual([])
  }, 60_000)

  it('answers a late resend of a replaced submission arriving at another process as replaced, and keeps the later weights', async () => {
    extraServer ??= await startBuiltServer({ ...process.env, BASE_URL: '' })
    const { id, who } = await newRoom('resend', { phone: 'stakeholder' })
    const weighingId = (await who.owner!.client.post(`/api/rooms/${id}/weighings`, { inputStyle: 'sliders' })).body.id as string
    const here = socketFor(who.phone!.client, baseUrl)
    const there = socketFor(who.phone!.client, extraServer.baseUrl)
    await Promise.all([connected(here), connected(there)])
    const first = randomUUID()
    const second = randomUUID()
    const send = (socket: RoomSocket, key: string, weights: number[]) => emitAck<MySubmission>(socket, 'weights:submit', { roomId: id, weighingId, idempotencyKey: key, weights })
    expect(await send(here, first, [3, 1, 0])).toMatchObject({ ok: true, data: { revision: 1 } })
    expect(await send(here, second, [0, 1, 3])).toMatchObject({ ok: true, data: { revision: 2 } })
    const late = await send(there, first, [3, 1, 0])
    expect(late).toMatchObject({ ok: true, data: { superseded: true, idempotencyKey: second, revision: 2, weights: [0, 0.25, 0.75] } })
    const { rows } = await testDb().query('select weights, revision, idempotency_key, earlier_keys from submissions where weighing_id = $1', [weighingId])
    expect(rows).toEqual([{ weights: [0, 0.25, 0.75], revision: 2, idempotency_key: second, earlier_keys: [first] }])
    expect(await count('audit_log', 'room_id = $1 and action = \'weights.submitted\'', [id])).toBe(2)
    // The latest key sent again is still the plain "already stored" answer.
    const same = await send(there, second, [0, 1, 3])
    expect(same).toMatchObject({ ok: true, data: { revision: 2, idempotencyKey: second } })
    expect((same as { data: MySubmission }).data.superseded).toBeUndefined()
  }, 30_000)
})

describe('anonymous labels', () => {
  it('follow a keyed order that is not the order of submission, the same on every call and in the minutes', async () => {
    const { id, who } = await newRoom('anonymous', { a: 'stakeholder', b: 'stakeholder', c: 'stakeholder', d: 'stakeholder' })
    const weighingId = (await who.owner!.client.post(`/api/rooms/${id}/weighings`, { inputStyle: 'sliders', showNames: false })).body.id as string
    // Rows with known ids, so the keyed order is known here: SHA-256 (Node's crypto) of
    // "anonymous-order:<weighing id>:<submission id>", ascending in hex.
    const people = ['a', 'b', 'c', 'd'] as const
    const weightsOf = { a: [1, 0, 0], b: [0, 1, 0], c: [0, 0, 1], d: [0.5, 0.5, 0] } as Record<string, number[]>
    const rowIds = Object.fromEntries(people.map(p => [p, randomUUID()]))
    const key = (p: string) => createHash('sha256').update(`anonymous-order:${weighingId}:${rowIds[p]}`).digest('hex')
    const keyed = [...people].sort((x, y) => (key(x) < key(y) ? -1 : 1))
    // Submitted in the reverse of that order, so the two orders differ whatever the ids.
    const submittedOrder = [...keyed].reverse()
    for (const [i, p] of submittedOrder.entries()) {
      await testDb().query('insert into submissions (id, weighing_id, user_id, weights, idempotency_key, submitted_at) values ($1, $2, $3, $4, $5, now() + make_interval(secs => $6))', [rowIds[p], weighingId, who[p]!.id, JSON.stringify(weightsOf[p]), `key-${p}`, i])
    }
    expect((await who.owner!.client.post(`/api/rooms/${id}/weighings/${weighingId}/close`)).status).toBe(200)
    expect((await who.owner!.client.post(`/api/rooms/${id}/weighings/${weighingId}/reveal`)).status).toBe(200)
    const first = await who.owner!.client.get(`/api/rooms/${id}/weighings/${weighingId}/results`)
    expect(first.status).toBe(200)
    const rows = first.body.weightings.map((w: { label: string, weights: number[] }) => [w.label, w.weights])
    expect(rows).toEqual(keyed.map((p, i) => [`Stakeholder ${i + 1}`, weightsOf[p]]))
    expect(rows.map((r: [string, number[]]) => r[1])).not.toEqual(submittedOrder.map(p => weightsOf[p]))
    expect(JSON.stringify(first.body)).not.toContain('Test anonymous-')
    // Stable: the same labels on the same weightings on another call, by another person.
    const again = await who.a!.client.get(`/api/rooms/${id}/weighings/${weighingId}/results`)
    expect(again.body.weightings).toEqual(first.body.weightings)
    // The minutes label them the same way (weights as whole percentages).
    const minutes = await who.owner!.client.get(`/api/rooms/${id}/minutes`)
    expect(minutes.status).toBe(200)
    expect(minutes.body.rounds[0].weightings.map((w: { label: string, weightsPercent: number[] }) => [w.label, w.weightsPercent]))
      .toEqual(keyed.map((p, i) => [`Stakeholder ${i + 1}`, weightsOf[p]!.map(v => v * 100)]))
  })
})
