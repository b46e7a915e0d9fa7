import { randomUUID } from 'node:crypto'
import { io as connect, type Socket } from 'socket.io-client'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Ack, ClientToServerEvents, JoinedRoom, ServerToClientEvents } from '../../shared/types/realtime'
import type { MyBallot, VoteView } from '../../shared/types/resolution'
import { Client, newPerson } from '../support/client'
import { closeTestDb, count, testDb } from '../support/db'

const baseUrl = inject('baseUrl')
type RoomSocket = Socket<ServerToClientEvents, ClientToServerEvents>

const criteria = [
  { id: 'cost', name: 'Cost', unit: '£k', direction: 'min' as const },
  { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' as const },
  { id: 'speed', name: 'Delay', unit: 'weeks', direction: 'min' as const },
]
// Worked by hand: "worse" costs more (60 > 50), reaches fewer (800 < 900) and takes longer
// (14 > 12) than "broad", so it is dominated; no alternative is at least as good as cheap, broad
// or quick on every criterion (each is best on one: cost 10, reach 900, delay 2), so those three
// are the efficient set and the default ballot.
const alternatives = [
  { id: 'cheap', name: 'Cheap plan', scores: { cost: 10, reach: 100, speed: 10 } },
  { id: 'broad', name: 'Broad plan', scores: { cost: 50, reach: 900, speed: 12 } },
  { id: 'quick', name: 'Quick plan', scores: { cost: 40, reach: 300, speed: 2 } },
  { id: 'worse', name: 'Worse plan', scores: { cost: 60, reach: 800, speed: 14 } },
]
const EFFICIENT = ['cheap', 'broad', 'quick']

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
function emitAck<T>(socket: RoomSocket, event: 'room:join' | 'ballot:cast', body: any): Promise<Ack<T>> {
  return new Promise(resolve => (socket.emit as any)(event, body, resolve))
}
/** The next vote state that satisfies `test`. */
function nextVote(socket: RoomSocket, test: (v: VoteView | null) => boolean) {
  return new Promise<VoteView | null>((resolve) => {
    const listener = (body: { roomId: string, vote: VoteView | null }) => {
      if (!test(body.vote)) return
      socket.off('vote:state', listener)
      resolve(body.vote)
    }
    socket.on('vote:state', listener)
  })
}
const ballotsOf = (voteId: string) => testDb().query('select b.choices, b.revision, b.idempotency_key, u.display_name from ballots b join users u on u.id = b.user_id where vote_id = $1 order by u.display_name', [voteId]).then(r => r.rows)

let roomId = ''
const people: Record<string, Client> = {}

beforeAll(async () => {
  const facilitator = await newPerson(baseUrl, 'vote-facilitator')
  people.facilitator = facilitator.client
  roomId = (await facilitator.client.post('/api/rooms', { title: 'Voting room', question: 'Which plan?' })).body.id
  expect((await facilitator.client.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })).status).toBe(201)
  for (const [label, role] of [['s1', 'stakeholder'], ['s2', 'stakeholder'], ['s3', 'stakeholder'], ['observer', 'observer'], ['secretary', 'secretary']] as const) {
    const person = await newPerson(baseUrl, `vote-${label}`)
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, person.user.id, role])
    people[label] = person.client
  }
  people.outsider = (await newPerson(baseUrl, 'vote-outsider')).client
})

afterAll(async () => {
  for (const socket of sockets) socket.disconnect()
  await closeTestDb()
})

describe('the final vote', () => {
  let voteId = ''

  it('lets only the facilitator open a vote, and refuses a bad shortlist without writing anything', async () => {
    for (const who of ['s1', 'observer', 'secretary']) {
      expect((await people[who]!.post(`/api/rooms/${roomId}/votes`, {})).status).toBe(403)
    }
    expect((await people.outsider!.post(`/api/rooms/${roomId}/votes`, {})).status).toBe(404)
    expect((await new Client(baseUrl).post(`/api/rooms/${roomId}/votes`, {})).status).toBe(401)
    for (const [shortlist, message] of [
      [['cheap', 'nowhere'], /Not in ledger version 1: nowhere/],
      [['cheap', 'cheap'], /twice/],
      [[], /at least one/],
      ['cheap', /./],
    ] as const) {
      const answer = await people.facilitator!.post(`/api/rooms/${roomId}/votes`, { shortlist })
      expect(answer.status).toBe(400)
      expect(answer.body.message).toMatch(message)
    }
    expect(await count('votes', 'room_id = $1', [roomId])).toBe(0)

    const opened = await people.facilitator!.post(`/api/rooms/${roomId}/votes`, {})
    expect(opened.status).toBe(201)
    expect(opened.body).toMatchObject({ status: 'open', ledgerVersion: 1, shortlist: EFFICIENT, cast: 0, eligible: 3, namesShown: false })
    expect(opened.body.tally.map((r: { name: string }) => r.name)).toEqual(['Cheap plan', 'Broad plan', 'Quick plan'])
    voteId = opened.body.id
    expect((await people.facilitator!.post(`/api/rooms/${roomId}/votes`, {})).status).toBe(409)
    expect(await count('audit_log', 'room_id = $1 and action = \'vote.opened\'', [roomId])).toBe(1)
  })

  it('acknowledges a ballot only once it is stored; the gallery sees the tally; a resend is not counted twice', async () => {
    const gallery = socketFor(people.observer!)
    const phone = socketFor(people.s1!)
    const console_ = socketFor(people.facilitator!)
    await Promise.all([connected(gallery), connected(phone), connected(console_)])
    const galleryJoin = await emitAck<JoinedRoom>(gallery, 'room:join', { roomId })
    expect(galleryJoin).toMatchObject({ ok: true, data: { vote: { id: voteId, cast: 0 }, myBallot: null } })
    expect((await emitAck<JoinedRoom>(phone, 'room:join', { roomId })).ok).toBe(true)
    expect((await emitAck<JoinedRoom>(console_, 'room:join', { roomId })).ok).toBe(true)

    const seen = nextVote(gallery, v => v?.cast === 1)
    const consoleSeen = nextVote(console_, v => v?.cast === 1)
    const key = randomUUID()
    const choices = { cheap: 'object', broad: 'approve', quick: 'abstain' }
    const ack = await emitAck<MyBallot>(phone, 'ballot:cast', { roomId, voteId, idempotencyKey: key, choices })
    expect(ack).toMatchObject({ ok: true, data: { voteId, choices, revision: 1, idempotencyKey: key } })
    // Stored before the acknowledgement arrived.
    const stored = await ballotsOf(voteId)
    expect(stored).toHaveLength(1)
    expect(stored[0].choices).toEqual(choices)
    const tally = (await seen)!
    expect(tally.tally).toEqual([
      { alternativeId: 'cheap', name: 'Cheap plan', approve: 0, object: 1, abstain: 0 },
      { alternativeId: 'broad', name: 'Broad plan', approve: 1, object: 0, abstain: 0 },
      { alternativeId: 'quick', name: 'Quick plan', approve: 0, object: 0, abstain: 1 },
    ])
    expect(tally.ballots).toBeUndefined()
    // The room has never weighed with names shown: even the facilitator sees no names.
    expect((await consoleSeen)!.ballots).toBeUndefined()

    // The same ballot sent again (a reconnecting phone) is recognised, not counted twice.
    const again = await emitAck<MyBallot>(phone, 'ballot:cast', { roomId, voteId, idempotencyKey: key, choices })
    expect(again).toMatchObject({ ok: true, data: { revision: 1 } })
    expect(await count('ballots', 'vote_id = $1', [voteId])).toBe(1)

    // A new ballot replaces the earlier one, until the vote closes.
    const changed = { cheap: 'approve', broad: 'approve', quick: 'object' }
    const changedKey = randomUUID()
    const revised = await emitAck<MyBallot>(phone, 'ballot:cast', { roomId, voteId, idempotencyKey: changedKey, choices: changed })
    expect(revised).toMatchObject({ ok: true, data: { revision: 2, choices: changed } })
    expect(await count('ballots', 'vote_id = $1', [voteId])).toBe(1)

    // The first ballot arriving late (held up somewhere) does not bring its choices back: it is
    // answered as replaced, with the later ballot, and nothing is stored.
    const auditBefore = await count('audit_log', 'room_id = $1 and action = \'ballot.cast\'', [roomId])
    const late = await emitAck<MyBallot>(phone, 'ballot:cast', { roomId, voteId, idempotencyKey: key, choices })
    expect(late).toMatchObject({ ok: true, data: { superseded: true, idempotencyKey: changedKey, revision: 2, choices: changed } })
    expect((await ballotsOf(voteId)).map(b => [b.choices, b.revision, b.idempotency_key])).toEqual([[changed, 2, changedKey]])
    expect(await count('audit_log', 'room_id = $1 and action = \'ballot.cast\'', [roomId])).toBe(auditBefore)

    // A reloaded phone gets its ballot back.
    const rejoin = await emitAck<JoinedRoom>(phone, 'room:join', { roomId })
    expect(rejoin).toMatchObject({ ok: true, data: { myBallot: { voteId, revision: 2, choices: changed } } })
    expect((await people.s1!.get(`/api/rooms/${roomId}/votes`)).body.mine).toMatchObject({ revision: 2, choices: changed })
  })

  it.each([
    ['a ballot missing an alternative', { choices: { cheap: 'approve', broad: 'object' } }, 400, /quick has no choice/],
    ['an alternative not on the ballot', { choices: { cheap: 'approve', broad: 'object', quick: 'abstain', worse: 'approve' } }, 400, /Not on the ballot: worse/],
    ['a choice that is not approve, object or abstain', { choices: { cheap: 'maybe', broad: 'object', quick: 'abstain' } }, 400, /approve, object or abstain/],
    ['no choices at all', { choices: undefined }, 400, /choice/],
    ['a missing key', { idempotencyKey: '' }, 400, /key/],
    ['another room', { roomId: '00000000-0000-4000-8000-000000000000' }, 404, /not a member/],
    ['a vote id that is not this room\'s', { voteId: '00000000-0000-4000-8000-000000000000' }, 404, /No such vote/],
  ])('refuses %s with a clear answer and changes nothing', async (_label, change, status, message) => {
    const phone = socketFor(people.s1!)
    await connected(phone)
    const failure = new Promise(resolve => phone.once('failure', resolve))
    const before = await ballotsOf(voteId)
    const ack = await emitAck(phone, 'ballot:cast', { roomId, voteId, idempotencyKey: randomUUID(), choices: { cheap: 'approve', broad: 'approve', quick: 'approve' }, ...change })
    expect(ack).toMatchObject({ ok: false, status })
    expect((ack as { message: string }).message).toMatch(message)
    expect(await failure).toMatchObject({ event: 'ballot:cast', status })
    expect(await ballotsOf(voteId)).toEqual(before)
  })

  it('refuses ballots from an observer, a secretary, the facilitator and an outsider', async () => {
    const before = await count('ballots')
    for (const who of ['observer', 'secretary', 'facilitator']) {
      const socket = socketFor(people[who]!)
      await connected(socket)
      expect(await emitAck(socket, 'ballot:cast', { roomId, voteId, idempotencyKey: randomUUID(), choices: { cheap: 'approve', broad: 'approve', quick: 'approve' } })).toMatchObject({ ok: false, status: 403 })
      expect((await people[who]!.request('PUT', `/api/rooms/${roomId}/votes/${voteId}/ballot`, { idempotencyKey: randomUUID(), choices: { cheap: 'approve', broad: 'approve', quick: 'approve' } })).status).toBe(403)
    }
    const outsider = socketFor(people.outsider!)
    await connected(outsider)
    expect(await emitAck(outsider, 'ballot:cast', { roomId, voteId, idempotencyKey: randomUUID(), choices: { cheap: 'approve', broad: 'approve', quick: 'approve' } })).toMatchObject({ ok: false, status: 404 })
    expect((await people.outsider!.request('PUT', `/api/rooms/${roomId}/votes/${voteId}/ballot`, { idempotencyKey: randomUUID(), choices: {} })).status).toBe(404)
    expect(await count('ballots')).toBe(before)
  })

  it('takes a ballot over HTTP with the same rules', async () => {
    const path = `/api/rooms/${roomId}/votes/${voteId}/ballot`
    const bad = await people.s2!.request('PUT', path, { idempotencyKey: randomUUID(), choices: { cheap: 'approve' } })
    expect(bad.status).toBe(400)
    expect(bad.body.message).toMatch(/broad, quick have no choice/)
    expect(await count('ballots', 'vote_id = $1', [voteId])).toBe(1)
    const key = randomUUID()
    const body = { idempotencyKey: key, choices: { cheap: 'object', broad: 'object', quick: 'approve' } }
    const cast = await people.s2!.request('PUT', path, body)
    expect(cast.status).toBe(200)
    expect(cast.body).toMatchObject({ voteId, revision: 1 })
    expect((await people.s2!.request('PUT', path, body)).body.revision).toBe(1)
    expect(await count('ballots', 'vote_id = $1', [voteId])).toBe(2)
    expect(await count('audit_log', 'room_id = $1 and action = \'ballot.cast\'', [roomId])).toBe(3)
  })

  it('closes only for the facilitator; the tally is the count of the stored ballots; later ballots are refused', async () => {
    expect((await people.s1!.post(`/api/rooms/${roomId}/votes/${voteId}/close`)).status).toBe(403)
    expect((await people.observer!.post(`/api/rooms/${roomId}/votes/${voteId}/close`)).status).toBe(403)
    const closed = await people.facilitator!.post(`/api/rooms/${roomId}/votes/${voteId}/close`)
    expect(closed.status).toBe(200)
    expect(closed.body).toMatchObject({ status: 'closed', cast: 2, eligible: 3 })
    // Counted here, independently of the server's tally code, from the rows in the database.
    const stored = await ballotsOf(voteId)
    for (const row of closed.body.tally as VoteView['tally']) {
      for (const choice of ['approve', 'object', 'abstain'] as const) {
        expect(row[choice]).toBe(stored.filter(b => b.choices[row.alternativeId] === choice).length)
      }
    }
    expect(closed.body.tally.find((r: { alternativeId: string }) => r.alternativeId === 'quick')).toMatchObject({ approve: 1, object: 1, abstain: 0 })

    const phone = socketFor(people.s3!)
    await connected(phone)
    const late = await emitAck(phone, 'ballot:cast', { roomId, voteId, idempotencyKey: randomUUID(), choices: { cheap: 'approve', broad: 'approve', quick: 'approve' } })
    expect(late).toMatchObject({ ok: false, status: 409 })
    expect((late as { message: string }).message).toMatch(/closed/)
    const lateHttp = await people.s1!.request('PUT', `/api/rooms/${roomId}/votes/${voteId}/ballot`, { idempotencyKey: randomUUID(), choices: { cheap: 'object', broad: 'object', quick: 'object' } })
    expect(lateHttp.status).toBe(409)
    expect(await ballotsOf(voteId)).toEqual(stored)
    expect((await people.facilitator!.post(`/api/rooms/${roomId}/votes/${voteId}/close`)).status).toBe(409)
    expect(await count('audit_log', 'room_id = $1 and action = \'vote.closed\'', [roomId])).toBe(1)
  })

  it('shows who chose what to the facilitator only, once the room weighs with names shown', async () => {
    const weighing = await people.facilitator!.post(`/api/rooms/${roomId}/weighings`, { showNames: true })
    expect(weighing.status).toBe(201)
    expect((await people.facilitator!.post(`/api/rooms/${roomId}/weighings/${weighing.body.id}/close`)).status).toBe(200)

    const forFacilitator = await people.facilitator!.get(`/api/rooms/${roomId}/votes`)
    expect(forFacilitator.body.current).toMatchObject({ id: voteId, namesShown: true })
    expect(forFacilitator.body.current.ballots).toEqual([
      { name: 'Test vote-s1', choices: { cheap: 'approve', broad: 'approve', quick: 'object' } },
      { name: 'Test vote-s2', choices: { cheap: 'object', broad: 'object', quick: 'approve' } },
    ])
    for (const who of ['s1', 'observer', 'secretary']) {
      const answer = await people[who]!.get(`/api/rooms/${roomId}/votes`)
      expect(answer.status).toBe(200)
      expect(answer.body.current.ballots).toBeUndefined()
      expect(answer.body.current.tally).toEqual(forFacilitator.body.current.tally)
    }
    expect((await people.outsider!.get(`/api/rooms/${roomId}/votes`)).status).toBe(404)

    // An anonymous weighing later: the room chose anonymity, so names go again.
    const anonymous = await people.facilitator!.post(`/api/rooms/${roomId}/weighings`, { showNames: false })
    expect((await people.facilitator!.post(`/api/rooms/${roomId}/weighings/${anonymous.body.id}/close`)).status).toBe(200)
    const after = await people.facilitator!.get(`/api/rooms/${roomId}/votes`)
    expect(after.body.current.namesShown).toBe(false)
    expect(after.body.current.ballots).toBeUndefined()
  })

  it('opens a second vote on a shortlist the facilitator names, dominated alternatives included', async () => {
    const opened = await people.facilitator!.post(`/api/rooms/${roomId}/votes`, { shortlist: ['worse', 'broad'] })
    expect(opened.status).toBe(201)
    expect(opened.body).toMatchObject({ shortlist: ['worse', 'broad'], cast: 0 })
    const list = await people.s1!.get(`/api/rooms/${roomId}/votes`)
    expect(list.body.current.id).toBe(opened.body.id)
    expect(list.body.votes).toHaveLength(2)
    expect(list.body.mine).toBeNull()
    expect((await people.facilitator!.post(`/api/rooms/${roomId}/votes/${opened.body.id}/close`)).status).toBe(200)
  })
})
