/**
 * The access matrix: every HTTP route under server/api and every socket.io event a client may send,
 * tried by every kind of caller, with the exact answer each must get. The tables below ARE the
 * policy; the tests check the running server against them.
 *
 * Callers (columns):
 *   out  signed out (no session cookie)
 *   non  signed in, not a member of the room
 *   stk  the room's stakeholder      obs  the room's observer      sec  the room's secretary
 *   fac  the room's facilitator
 *   adm  a site administrator who is not a member of the room
 *   oth  the facilitator of ANOTHER room, asking about this room
 *   xr   the same facilitator of another room, naming this room's sub-resource (weighing, vote,
 *        invitation, member, resolution, minutes record) under the path of THEIR OWN room: ids
 *        must not leak across rooms. Only for routes with a sub-resource; `__` elsewhere.
 *
 * Rules the rows follow (shared/roles.ts, server/utils/access.ts): signed out → 401 on anything that
 * needs an account; not a member → 404, exactly as for a room that does not exist (admins and other
 * rooms' facilitators included: a site role gives no room role); a member whose role lacks the
 * action → 403. "Allowed" is the route's success status, reached with a valid request: every caller
 * sends the same valid body, so a refusal is never a validation error. Routes that change state get
 * a room of their own, prepared to the stage they need (e.g. an open weighing to close); callers
 * that may use a public route each get their own target (own invitation link, own new address).
 *
 * A route file without a row fails the coverage test: add its row (and its request in REQUESTS).
 */
import { createHash, randomBytes, randomUUID } from 'node:crypto'
import { readdirSync, readFileSync } from 'node:fs'
import { join, relative, sep } from 'node:path'
import { io as connect, type Socket } from 'socket.io-client'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { roleAllows, type RoomAction } from '../../shared/roles'
import type { Ack, ClientToServerEvents, JoinedRoom, ServerToClientEvents } from '../../shared/types/realtime'
import { sampleMinutesPdf } from '../fixtures/minutes/sampleMinutes'
import { Client, TEST_PASSWORD, newPerson, uniqueEmail, type Answer } from '../support/client'
import { closeTestDb, testDb } from '../support/db'

const baseUrl = inject('baseUrl')
const ROOT = join(import.meta.dirname, '../..')

const PERSONAS = ['out', 'non', 'stk', 'obs', 'sec', 'fac', 'adm', 'oth'] as const
type Persona = (typeof PERSONAS)[number]
type Caller = Persona | 'xr'
const CALLERS: readonly Caller[] = [...PERSONAS, 'xr']
/** Not applicable (the xr column of a route without a sub-resource). */
const __ = null
type Row = readonly [out: number, non: number, stk: number, obs: number, sec: number, fac: number, adm: number, oth: number, xr: number | null]

// ─── The HTTP policy ─────────────────────────────────────────────────────────────────────────────
/* eslint-disable @stylistic/no-multi-spaces, @stylistic/key-spacing -- a table, aligned to be read at a glance */
const HTTP_MATRIX: Record<string, Row> = {
  //                                                          out  non  stk  obs  sec  fac  adm  oth   xr
  // Public. dev/mail exists only with COUNTERPOISE_DEV_MAIL=1 (npm test's mail catcher sets it);
  // a deployed server answers 404 to everyone there.
  'GET /api/health':                                         [200, 200, 200, 200, 200, 200, 200, 200,  __],
  'GET /api/dev/mail':                                       [200, 200, 200, 200, 200, 200, 200, 200,  __],
  'POST /api/auth/sign-in':                                  [200, 200, 200, 200, 200, 200, 200, 200,  __],
  'POST /api/auth/sign-out':                                 [200, 200, 200, 200, 200, 200, 200, 200,  __],
  'POST /api/auth/sign-up':                                  [201, 201, 201, 201, 201, 201, 201, 201,  __],
  'POST /api/minutes/check':                                 [200, 200, 200, 200, 200, 200, 200, 200,  __],
  // The invitation link is the credential: whoever holds it may read it and use it (once).
  // Signed out, accepting makes the account (201); signed in, it adds that account (200).
  'GET /api/invitations/[token]':                            [200, 200, 200, 200, 200, 200, 200, 200,  __],
  'POST /api/invitations/[token]/accept':                    [201, 200, 200, 200, 200, 200, 200, 200,  __],
  // Any account may join a room as observer with its code (201: newly joined).
  'POST /api/join':                                          [401, 201, 201, 201, 201, 201, 201, 201,  __],
  // Site administration: the site role only, never a room role.
  'GET /api/admin/users':                                    [401, 403, 403, 403, 403, 403, 200, 403,  __],
  'PATCH /api/admin/users/[id]':                             [401, 403, 403, 403, 403, 403, 200, 403,  __],
  // One's own account: any account. Asked with a wrong current password (400 once past the
  // sign-in check), so no persona's sessions end.
  'PUT /api/account/password':                               [401, 400, 400, 400, 400, 400, 400, 400,  __],
  // My rooms and new rooms: any account.
  'GET /api/rooms':                                          [401, 200, 200, 200, 200, 200, 200, 200,  __],
  'POST /api/rooms':                                         [401, 201, 201, 201, 201, 201, 201, 201,  __],
  // room:view — every member.
  'GET /api/rooms/[id]':                                     [401, 404, 200, 200, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/live':                                [401, 404, 200, 200, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/join-qr.svg':                         [401, 404, 200, 200, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/ledger':                              [401, 404, 200, 200, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/ledger/export.csv':                   [401, 404, 200, 200, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/ledger/export.json':                  [401, 404, 200, 200, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/weighings':                           [401, 404, 200, 200, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/weighings/[weighingId]/results':      [401, 404, 200, 200, 200, 200, 404, 404, 404],
  'GET /api/rooms/[id]/votes':                               [401, 404, 200, 200, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/resolutions':                         [401, 404, 200, 200, 200, 200, 404, 404,  __],
  // room:manage, ledger:edit, people:manage — the facilitator.
  'PATCH /api/rooms/[id]':                                   [401, 404, 403, 403, 403, 200, 404, 404,  __],
  'PUT /api/rooms/[id]/ledger':                              [401, 404, 403, 403, 403, 200, 404, 404,  __],
  'POST /api/rooms/[id]/ledger/import':                      [401, 404, 403, 403, 403, 200, 404, 404,  __],
  'GET /api/rooms/[id]/invitations':                         [401, 404, 403, 403, 403, 200, 404, 404,  __],
  'POST /api/rooms/[id]/invitations':                        [401, 404, 403, 403, 403, 201, 404, 404,  __],
  'DELETE /api/rooms/[id]/invitations/[invitationId]':       [401, 404, 403, 403, 403, 200, 404, 404, 404],
  'POST /api/rooms/[id]/invitations/[invitationId]/resend':  [401, 404, 403, 403, 403, 200, 404, 404, 404],
  'PATCH /api/rooms/[id]/members/[userId]':                  [401, 404, 403, 403, 403, 200, 404, 404, 404],
  'DELETE /api/rooms/[id]/members/[userId]':                 [401, 404, 403, 403, 403, 200, 404, 404, 404],
  // weighing:run — the facilitator opens, closes and reveals weighings and runs the final vote.
  'POST /api/rooms/[id]/weighings':                          [401, 404, 403, 403, 403, 201, 404, 404,  __],
  'POST /api/rooms/[id]/weighings/[weighingId]/close':       [401, 404, 403, 403, 403, 200, 404, 404, 404],
  'POST /api/rooms/[id]/weighings/[weighingId]/reveal':      [401, 404, 403, 403, 403, 200, 404, 404, 404],
  'POST /api/rooms/[id]/votes':                              [401, 404, 403, 403, 403, 201, 404, 404,  __],
  'POST /api/rooms/[id]/votes/[voteId]/close':               [401, 404, 403, 403, 403, 200, 404, 404, 404],
  // vote:cast — stakeholders only (xr: a facilitator, so refused on the role before the vote is looked up).
  'PUT /api/rooms/[id]/votes/[voteId]/ballot':               [401, 404, 200, 403, 403, 403, 404, 404, 403],
  // resolution:record — the facilitator.
  'POST /api/rooms/[id]/resolutions':                        [401, 404, 403, 403, 403, 201, 404, 404,  __],
  'PATCH /api/rooms/[id]/resolutions/[resolutionId]':        [401, 404, 403, 403, 403, 200, 404, 404, 404],
  // minutes:view — the facilitator and the secretary (members get the signed minutes by e-mail).
  'GET /api/rooms/[id]/audit':                               [401, 404, 403, 403, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/minutes':                             [401, 404, 403, 403, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/minutes/draft.pdf':                   [401, 404, 403, 403, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/minutes/export.json':                 [401, 404, 403, 403, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/minutes/export.csv':                  [401, 404, 403, 403, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/minutes/records':                     [401, 404, 403, 403, 200, 200, 404, 404,  __],
  'GET /api/rooms/[id]/minutes/records/[recordId]':          [401, 404, 403, 403, 200, 200, 404, 404, 404],
  // minutes:sign — the secretary signs and sends (xr: a facilitator, refused on the role).
  'POST /api/rooms/[id]/minutes/sign':                       [401, 404, 403, 403, 201, 403, 404, 404,  __],
  'POST /api/rooms/[id]/minutes/records/[recordId]/send':    [401, 404, 403, 403, 200, 403, 404, 404, 403],
}

/** The shared/roles.ts action each room route enforces: the member columns above must agree with it. */
const ROOM_ACTION_OF: Record<string, RoomAction> = {
  'GET /api/rooms/[id]': 'room:view',
  'GET /api/rooms/[id]/live': 'room:view',
  'GET /api/rooms/[id]/join-qr.svg': 'room:view',
  'GET /api/rooms/[id]/ledger': 'room:view',
  'GET /api/rooms/[id]/ledger/export.csv': 'room:view',
  'GET /api/rooms/[id]/ledger/export.json': 'room:view',
  'GET /api/rooms/[id]/weighings': 'room:view',
  'GET /api/rooms/[id]/weighings/[weighingId]/results': 'room:view',
  'GET /api/rooms/[id]/votes': 'room:view',
  'GET /api/rooms/[id]/resolutions': 'room:view',
  'PATCH /api/rooms/[id]': 'room:manage',
  'PUT /api/rooms/[id]/ledger': 'ledger:edit',
  'POST /api/rooms/[id]/ledger/import': 'ledger:edit',
  'GET /api/rooms/[id]/invitations': 'people:manage',
  'POST /api/rooms/[id]/invitations': 'people:manage',
  'DELETE /api/rooms/[id]/invitations/[invitationId]': 'people:manage',
  'POST /api/rooms/[id]/invitations/[invitationId]/resend': 'people:manage',
  'PATCH /api/rooms/[id]/members/[userId]': 'people:manage',
  'DELETE /api/rooms/[id]/members/[userId]': 'people:manage',
  'POST /api/rooms/[id]/weighings': 'weighing:run',
  'POST /api/rooms/[id]/weighings/[weighingId]/close': 'weighing:run',
  'POST /api/rooms/[id]/weighings/[weighingId]/reveal': 'weighing:run',
  'POST /api/rooms/[id]/votes': 'weighing:run',
  'POST /api/rooms/[id]/votes/[voteId]/close': 'weighing:run',
  'PUT /api/rooms/[id]/votes/[voteId]/ballot': 'vote:cast',
  'POST /api/rooms/[id]/resolutions': 'resolution:record',
  'PATCH /api/rooms/[id]/resolutions/[resolutionId]': 'resolution:record',
  'GET /api/rooms/[id]/audit': 'minutes:view',
  'GET /api/rooms/[id]/minutes': 'minutes:view',
  'GET /api/rooms/[id]/minutes/draft.pdf': 'minutes:view',
  'GET /api/rooms/[id]/minutes/export.json': 'minutes:view',
  'GET /api/rooms/[id]/minutes/export.csv': 'minutes:view',
  'GET /api/rooms/[id]/minutes/records': 'minutes:view',
  'GET /api/rooms/[id]/minutes/records/[recordId]': 'minutes:view',
  'POST /api/rooms/[id]/minutes/sign': 'minutes:sign',
  'POST /api/rooms/[id]/minutes/records/[recordId]/send': 'minutes:sign',
}

/**
 * Route files that exist but whose policy is not settled yet (being written by someone else): the
 * coverage test lets these through without a row. Keep it empty when you can; any other route
 * file without a row fails.
 */
const PENDING = new Set<string>([])

// ─── The socket policy ───────────────────────────────────────────────────────────────────────────
/**
 * 'refused': the handshake fails (connect_error, data.reason 'signed-out'), so nothing can be sent.
 * 'ok': the acknowledgement is { ok: true }. A number: the acknowledgement is { ok: false, status }
 * and a 'failure' event with the same event name and status arrives. 'quiet': the event has no
 * acknowledgement; the server sends no 'failure' and keeps the connection.
 */
type SocketOutcome = 'refused' | 'ok' | 'quiet' | number
type SocketRow = readonly [out: SocketOutcome, non: SocketOutcome, stk: SocketOutcome, obs: SocketOutcome, sec: SocketOutcome, fac: SocketOutcome, adm: SocketOutcome, oth: SocketOutcome]
const SOCKET_MATRIX: Record<string, SocketRow> = {
  //                   out        non      stk      obs      sec      fac      adm      oth
  'handshake':        ['refused', 'ok',    'ok',    'ok',    'ok',    'ok',    'ok',    'ok'],
  'room:join':        ['refused', 404,     'ok',    'ok',    'ok',    'ok',    404,     404],
  'room:leave':       ['refused', 'quiet', 'quiet', 'quiet', 'quiet', 'quiet', 'quiet', 'quiet'],
  'weights:submit':   ['refused', 404,     'ok',    403,     403,     403,     404,     404],
  'ballot:cast':      ['refused', 404,     'ok',    403,     403,     403,     404,     404],
}
/* eslint-enable @stylistic/no-multi-spaces, @stylistic/key-spacing */

// ─── People and rooms ────────────────────────────────────────────────────────────────────────────
const clients = {} as Record<Persona, Client>
const userIds = {} as Record<Exclude<Persona, 'out'>, string>
const ROOM_ROLE_OF = { stk: 'stakeholder', obs: 'observer', sec: 'secretary' } as const

const criteria = [
  { id: 'cost', name: 'Cost', unit: '£k', direction: 'min' as const },
  { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' as const },
  { id: 'delay', name: 'Delay', unit: 'weeks', direction: 'min' as const },
]
const alternatives = [
  { id: 'cheap', name: 'Cheap plan', scores: { cost: 10, reach: 100, delay: 10 } },
  { id: 'broad', name: 'Broad plan', scores: { cost: 50, reach: 900, delay: 12 } },
  { id: 'quick', name: 'Quick plan', scores: { cost: 40, reach: 300, delay: 2 } },
  { id: 'worse', name: 'Worse plan', scores: { cost: 60, reach: 800, delay: 14 } },
]

/** How far a room is prepared, in the order a meeting goes. */
const STAGES = ['ledger', 'openWeighing', 'closedWeighing', 'revealed', 'openVote', 'closedVote', 'resolution', 'signed'] as const
type Stage = (typeof STAGES)[number]

interface Room {
  id: string
  code: string
  weighingId?: string
  voteId?: string
  shortlist?: string[]
  resolutionId?: string
  recordId?: string
}

function must(answer: Answer, status: number, what: string) {
  if (answer.status !== status) throw new Error(`set-up: ${what} answered ${answer.status}, not ${status}: ${JSON.stringify(answer.body)}`)
  return answer.body
}

/** A room of `fac` with `stk`, `obs` and `sec` in it, prepared up to `stage`. */
async function buildRoom(label: string, stage: Stage): Promise<Room> {
  const fac = clients.fac
  const created = must(await fac.post('/api/rooms', { title: `Matrix ${label}`, question: 'Which plan goes forward?' }), 201, 'new room')
  const room: Room = { id: created.id, code: created.code }
  for (const persona of ['stk', 'obs', 'sec'] as const) {
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [room.id, userIds[persona], ROOM_ROLE_OF[persona]])
  }
  const reached = (s: Stage) => STAGES.indexOf(stage) >= STAGES.indexOf(s)
  must(await fac.request('PUT', `/api/rooms/${room.id}/ledger`, { baseVersion: 0, criteria, alternatives }), 201, 'ledger')
  if (!reached('openWeighing')) return room
  room.weighingId = must(await fac.post(`/api/rooms/${room.id}/weighings`, { inputStyle: 'sliders', showNames: false }), 201, 'open weighing').id
  if (!reached('closedWeighing')) return room
  await testDb().query('insert into submissions (weighing_id, user_id, weights, idempotency_key) values ($1, $2, $3, $4)', [room.weighingId, userIds.stk, JSON.stringify([0.5, 0.25, 0.25]), `matrix-${randomUUID()}`])
  must(await fac.post(`/api/rooms/${room.id}/weighings/${room.weighingId}/close`), 200, 'close weighing')
  if (!reached('revealed')) return room
  must(await fac.post(`/api/rooms/${room.id}/weighings/${room.weighingId}/reveal`), 200, 'reveal weighing')
  if (!reached('openVote')) return room
  const vote = must(await fac.post(`/api/rooms/${room.id}/votes`, {}), 201, 'open vote')
  room.voteId = vote.id
  room.shortlist = vote.shortlist
  if (!reached('closedVote')) return room
  must(await fac.post(`/api/rooms/${room.id}/votes/${room.voteId}/close`), 200, 'close vote')
  if (!reached('resolution')) return room
  room.resolutionId = must(await fac.post(`/api/rooms/${room.id}/resolutions`, { alternativeId: 'broad', rationale: 'Reaches the most people within budget.' }), 201, 'record resolution').id
  if (!reached('signed')) return room
  room.recordId = must(await clients.sec.post(`/api/rooms/${room.id}/minutes/sign`), 201, 'sign minutes').id
  return room
}

/** Another client with the same session, so a sign-out or sign-in leaves the persona as it was. */
const copyOf = (client: Client) => Object.assign(new Client(baseUrl), { cookie: client.cookie })

/** A multipart POST as a browser's FormData would send it, with the client's session cookie. */
async function postForm(client: Client, path: string, form: FormData): Promise<Answer> {
  const headers: Record<string, string> = { accept: 'application/json' }
  if (client.cookie) headers.cookie = client.cookie
  const answer = await fetch(`${baseUrl}${path}`, { method: 'POST', body: form, headers, redirect: 'manual' })
  const text = await answer.text()
  let body: unknown = text
  try {
    body = JSON.parse(text)
  }
  catch { /* not JSON */ }
  return { status: answer.status, body, headers: answer.headers }
}

/** A live invitation to `roomId` with a token we know (only its SHA-256 is stored, as the app does). */
async function invitation(roomId: string, email = uniqueEmail('matrix-invitee')) {
  const token = randomBytes(32).toString('base64url')
  const { rows: [row] } = await testDb().query(
    `insert into invitations (room_id, email, role, token_hash, expires_at, invited_by) values ($1, $2, 'stakeholder', $3, now() + interval '7 days', $4) returning id`,
    [roomId, email, createHash('sha256').update(token, 'utf8').digest('hex'), userIds.fac],
  )
  return { id: row.id as string, token }
}

/** Someone in `roomId` with a throwaway account, for the member routes to change or remove. */
async function throwawayMember(roomId: string, label: string) {
  const { user } = await newPerson(baseUrl, label)
  await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, \'stakeholder\')', [roomId, user.id])
  return user.id
}

// Fixtures, filled in beforeAll.
let main: Room // signed minutes: every read has something to read
let otherRoom: Room // the room `oth` runs
const fresh: Record<string, Room> = {} // one room per state-changing row
const perCaller: Record<string, Partial<Record<Caller, string>>> = {} // one target per caller
const targets: Record<string, string> = {}
let minutesPdf: Buffer

// ─── How each row is asked ───────────────────────────────────────────────────────────────────────
interface Ask {
  client: Client
  caller: Caller
  /** The room in the path: the fixture room, or for `xr` the caller's own room. */
  roomId: string
  /** The fixture room whose sub-resources are named. */
  room: Room
}
interface RowRequest {
  /** A room prepared to this stage for this row alone (the row changes state); without it, the main room. */
  room?: { fresh: Stage }
  ask: (a: Ask) => Promise<Answer>
}

const REQUESTS: Record<string, RowRequest> = {
  'GET /api/health': { ask: ({ client }) => client.get('/api/health') },
  'GET /api/dev/mail': { ask: ({ client }) => client.get('/api/dev/mail') },
  'POST /api/auth/sign-in': { ask: ({ client }) => client.post('/api/auth/sign-in', { email: targets.signInEmail, password: TEST_PASSWORD }) },
  'POST /api/auth/sign-out': { ask: ({ client }) => client.post('/api/auth/sign-out') },
  'PUT /api/account/password': { ask: ({ client }) => client.put('/api/account/password', { currentPassword: 'not-the-current-password', newPassword: 'matrix-new-password' }) },
  'POST /api/auth/sign-up': { ask: ({ client }) => client.post('/api/auth/sign-up', { displayName: 'Matrix newcomer', email: uniqueEmail('matrix-signup'), password: TEST_PASSWORD }) },
  'POST /api/minutes/check': {
    ask: ({ client }) => {
      const form = new FormData()
      form.set('file', new Blob([new Uint8Array(minutesPdf)]), 'minutes.pdf')
      return postForm(client, '/api/minutes/check', form)
    },
  },
  'GET /api/invitations/[token]': { ask: ({ client }) => client.get(`/api/invitations/${targets.readToken}`) },
  'POST /api/invitations/[token]/accept': {
    ask: ({ client, caller }) => client.post(`/api/invitations/${perCaller.accept![caller]}/accept`, { displayName: 'Matrix invitee', password: TEST_PASSWORD }),
  },
  'POST /api/join': { ask: ({ client }) => client.post('/api/join', { code: targets.joinCode }) },
  'GET /api/admin/users': { ask: ({ client }) => client.get('/api/admin/users') },
  'PATCH /api/admin/users/[id]': { ask: ({ client }) => client.patch(`/api/admin/users/${targets.plainUser}`, { siteRole: 'user' }) },
  'GET /api/rooms': { ask: ({ client }) => client.get('/api/rooms') },
  'POST /api/rooms': { ask: ({ client }) => client.post('/api/rooms', { title: 'Matrix room of my own', question: 'May anyone open a room?' }) },

  'GET /api/rooms/[id]': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}`) },
  'GET /api/rooms/[id]/live': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/live`) },
  'GET /api/rooms/[id]/join-qr.svg': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/join-qr.svg`) },
  'GET /api/rooms/[id]/ledger': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/ledger`) },
  'GET /api/rooms/[id]/ledger/export.csv': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/ledger/export.csv`) },
  'GET /api/rooms/[id]/ledger/export.json': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/ledger/export.json`) },
  'GET /api/rooms/[id]/weighings': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/weighings`) },
  'GET /api/rooms/[id]/weighings/[weighingId]/results': { ask: ({ client, roomId, room }) => client.get(`/api/rooms/${roomId}/weighings/${room.weighingId}/results`) },
  'GET /api/rooms/[id]/votes': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/votes`) },
  'GET /api/rooms/[id]/resolutions': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/resolutions`) },

  // The same title and question again: allowed, and changes nothing another row relies on.
  'PATCH /api/rooms/[id]': { ask: ({ client, roomId }) => client.patch(`/api/rooms/${roomId}`, { question: 'Which plan goes forward?' }) },
  // The ledger as it is: 200 "unchanged".
  'PUT /api/rooms/[id]/ledger': { ask: ({ client, roomId }) => client.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 1, criteria, alternatives }) },
  // A preview writes nothing.
  'POST /api/rooms/[id]/ledger/import': {
    ask: ({ client, roomId }) => {
      const form = new FormData()
      form.set('file', new Blob(['Name,Cost (£k),Reach (people),Delay (weeks)\nMiddle plan,30,500,8\n']), 'plans.csv')
      form.set('mode', 'preview')
      form.set('baseVersion', '1')
      return postForm(client, `/api/rooms/${roomId}/ledger/import`, form)
    },
  },
  'GET /api/rooms/[id]/invitations': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/invitations`) },
  'POST /api/rooms/[id]/invitations': { ask: ({ client, roomId }) => client.post(`/api/rooms/${roomId}/invitations`, { email: uniqueEmail('matrix-invited'), role: 'observer' }) },
  'DELETE /api/rooms/[id]/invitations/[invitationId]': { ask: ({ client, roomId }) => client.request('DELETE', `/api/rooms/${roomId}/invitations/${targets.withdrawInvitation}`) },
  'POST /api/rooms/[id]/invitations/[invitationId]/resend': { ask: ({ client, roomId }) => client.post(`/api/rooms/${roomId}/invitations/${targets.resendInvitation}/resend`) },
  'PATCH /api/rooms/[id]/members/[userId]': { ask: ({ client, roomId }) => client.patch(`/api/rooms/${roomId}/members/${targets.roleChangeMember}`, { role: 'observer' }) },
  'DELETE /api/rooms/[id]/members/[userId]': { ask: ({ client, roomId }) => client.request('DELETE', `/api/rooms/${roomId}/members/${targets.removedMember}`) },

  'POST /api/rooms/[id]/weighings': { room: { fresh: 'ledger' }, ask: ({ client, roomId }) => client.post(`/api/rooms/${roomId}/weighings`, { inputStyle: 'sliders' }) },
  'POST /api/rooms/[id]/weighings/[weighingId]/close': { room: { fresh: 'openWeighing' }, ask: ({ client, roomId, room }) => client.post(`/api/rooms/${roomId}/weighings/${room.weighingId}/close`) },
  'POST /api/rooms/[id]/weighings/[weighingId]/reveal': { room: { fresh: 'closedWeighing' }, ask: ({ client, roomId, room }) => client.post(`/api/rooms/${roomId}/weighings/${room.weighingId}/reveal`) },
  'POST /api/rooms/[id]/votes': { room: { fresh: 'revealed' }, ask: ({ client, roomId }) => client.post(`/api/rooms/${roomId}/votes`, {}) },
  'POST /api/rooms/[id]/votes/[voteId]/close': { room: { fresh: 'openVote' }, ask: ({ client, roomId, room }) => client.post(`/api/rooms/${roomId}/votes/${room.voteId}/close`) },
  'PUT /api/rooms/[id]/votes/[voteId]/ballot': {
    room: { fresh: 'openVote' },
    ask: ({ client, roomId, room }) => client.request('PUT', `/api/rooms/${roomId}/votes/${room.voteId}/ballot`, {
      idempotencyKey: randomUUID(),
      choices: Object.fromEntries(room.shortlist!.map(id => [id, 'approve'])),
    }),
  },
  'POST /api/rooms/[id]/resolutions': { room: { fresh: 'closedVote' }, ask: ({ client, roomId }) => client.post(`/api/rooms/${roomId}/resolutions`, { alternativeId: 'quick', rationale: 'Fastest to deliver.' }) },
  'PATCH /api/rooms/[id]/resolutions/[resolutionId]': { room: { fresh: 'resolution' }, ask: ({ client, roomId, room }) => client.patch(`/api/rooms/${roomId}/resolutions/${room.resolutionId}`, { conditions: 'Review after a year.' }) },

  'GET /api/rooms/[id]/audit': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/audit`) },
  'GET /api/rooms/[id]/minutes': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/minutes`) },
  'GET /api/rooms/[id]/minutes/draft.pdf': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/minutes/draft.pdf`) },
  'GET /api/rooms/[id]/minutes/export.json': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/minutes/export.json`) },
  'GET /api/rooms/[id]/minutes/export.csv': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/minutes/export.csv?table=alternatives`) },
  'GET /api/rooms/[id]/minutes/records': { ask: ({ client, roomId }) => client.get(`/api/rooms/${roomId}/minutes/records`) },
  'GET /api/rooms/[id]/minutes/records/[recordId]': { ask: ({ client, roomId, room }) => client.get(`/api/rooms/${roomId}/minutes/records/${room.recordId}.pdf`) },
  'POST /api/rooms/[id]/minutes/sign': { room: { fresh: 'resolution' }, ask: ({ client, roomId }) => client.post(`/api/rooms/${roomId}/minutes/sign`) },
  'POST /api/rooms/[id]/minutes/records/[recordId]/send': { ask: ({ client, roomId, room }) => client.post(`/api/rooms/${roomId}/minutes/records/${room.recordId}/send`) },
}

// ─── Route files on disk ─────────────────────────────────────────────────────────────────────────
/** Every route file under server/api as "METHOD /api/path", [param] segments kept. */
function routesOnDisk(): { key: string, file: string }[] {
  const apiDir = join(ROOT, 'server/api')
  return (readdirSync(apiDir, { recursive: true }) as string[])
    .filter(f => f.endsWith('.ts'))
    .map((file) => {
      const parts = relative(apiDir, join(apiDir, file)).split(sep)
      const match = /^(.*)\.(get|post|put|patch|delete)\.ts$/.exec(parts.pop()!)
      if (!match) return { key: `UNKNOWN-METHOD ${file}`, file }
      const name = match[1] === 'index' ? [] : [match[1]!]
      return { key: `${match[2]!.toUpperCase()} ${['/api', ...parts, ...name].join('/')}`, file: `server/api/${file}` }
    })
    .sort((a, b) => a.key.localeCompare(b.key))
}

/** The client→server events: the keys of ClientToServerEvents, and the events the handlers listen to. */
function socketEventsInSource() {
  const types = readFileSync(join(ROOT, 'shared/types/realtime.ts'), 'utf8')
  const block = /export interface ClientToServerEvents \{([\s\S]*?)\n\}/.exec(types)?.[1] ?? ''
  const declared = [...block.matchAll(/^\s*'([^']+)'\s*:/gm)].map(m => m[1]!)
  const handlers = readFileSync(join(ROOT, 'server/utils/socketHandlers.ts'), 'utf8')
  const handled = [...handlers.matchAll(/socket\.on\('([^']+)'/g)].map(m => m[1]!)
  return { declared: declared.sort(), handled: handled.sort() }
}

afterAll(closeTestDb)

describe('the access matrix covers everything', () => {
  it('has a row for every route file, and a route file for every row', () => {
    const onDisk = routesOnDisk()
    const missing = onDisk.filter(r => !(r.key in HTTP_MATRIX) && !PENDING.has(r.key))
    expect(missing.map(r => `new route without a row in the access matrix: ${r.key} (${r.file})`)).toEqual([])
    const keys = new Set(onDisk.map(r => r.key))
    expect(Object.keys(HTTP_MATRIX).filter(k => !keys.has(k)).map(k => `row for a route that no longer exists: ${k}`)).toEqual([])
    expect([...PENDING].filter(k => k in HTTP_MATRIX).map(k => `pending route that has a row now: ${k}`)).toEqual([])
    // Sanity: the glob really found the routes (so an empty directory cannot pass this test).
    expect(onDisk.length).toBeGreaterThanOrEqual(Object.keys(HTTP_MATRIX).length)
  })

  it('agrees with shared/roles.ts on every room route: a member is refused (403) exactly when the role lacks the action', () => {
    const roomRoutes = Object.keys(HTTP_MATRIX).filter(k => k.includes('/api/rooms/[id]'))
    expect(roomRoutes.filter(k => !(k in ROOM_ACTION_OF))).toEqual([])
    const disagreements = Object.entries(ROOM_ACTION_OF).flatMap(([route, action]) => (['stk', 'obs', 'sec', 'fac'] as const).flatMap((persona) => {
      const role = persona === 'fac' ? 'facilitator' : ROOM_ROLE_OF[persona]
      const status = HTTP_MATRIX[route]![PERSONAS.indexOf(persona)]!
      return (status === 403) === roleAllows(role, action) ? [`${route} as ${role}: ${status}, but ${action} is ${roleAllows(role, action) ? 'allowed' : 'not allowed'}`] : []
    }))
    expect(disagreements).toEqual([])
  })

  it('knows how to ask every row', () => {
    expect(Object.keys(HTTP_MATRIX).filter(k => !(k in REQUESTS))).toEqual([])
    expect(Object.keys(REQUESTS).filter(k => !(k in HTTP_MATRIX))).toEqual([])
  })

  it('has a row for every client→server socket event, and the handlers listen to exactly those', () => {
    const { declared, handled } = socketEventsInSource()
    expect(declared.length).toBeGreaterThan(0)
    expect(handled).toEqual(declared)
    const rows = Object.keys(SOCKET_MATRIX).filter(e => e !== 'handshake').sort()
    expect(declared.filter(e => !rows.includes(e)).map(e => `new socket event without a row in the access matrix: ${e}`)).toEqual([])
    expect(rows).toEqual(declared)
  })
})

describe('HTTP routes, by caller', () => {
  beforeAll(async () => {
    // The people. The administrator is made one in the database: the role is read from there.
    clients.out = new Client(baseUrl)
    for (const persona of PERSONAS.filter(p => p !== 'out')) {
      const person = await newPerson(baseUrl, `matrix-${persona}`)
      clients[persona] = person.client
      userIds[persona as Exclude<Persona, 'out'>] = person.user.id
    }
    await testDb().query('update users set site_role = \'admin\' where id = $1', [userIds.adm])
    otherRoom = { id: must(await clients.oth.post('/api/rooms', { title: 'Matrix other room', question: 'Is this room its own?' }), 201, 'other room').id, code: '' }

    main = await buildRoom('main', 'signed')
    for (const [key, request] of Object.entries(REQUESTS)) {
      if (typeof request.room === 'object') fresh[key] = await buildRoom(key, request.room.fresh)
    }
    targets.withdrawInvitation = (await invitation(main.id)).id
    targets.resendInvitation = (await invitation(main.id)).id
    targets.roleChangeMember = await throwawayMember(main.id, 'matrix-role-change')
    targets.removedMember = await throwawayMember(main.id, 'matrix-removed')
    targets.plainUser = (await newPerson(baseUrl, 'matrix-plain')).user.id
    const signIn = await newPerson(baseUrl, 'matrix-sign-in')
    targets.signInEmail = signIn.email

    // Public routes each caller uses on a target of its own, in rooms no other row looks at.
    const linkRoom = must(await clients.fac.post('/api/rooms', { title: 'Matrix invitation room', question: 'Do links work for anyone holding them?' }), 201, 'link room')
    targets.readToken = (await invitation(linkRoom.id)).token
    perCaller.accept = {}
    for (const persona of PERSONAS) perCaller.accept[persona] = (await invitation(linkRoom.id)).token
    const codeRoom = must(await clients.fac.post('/api/rooms', { title: 'Matrix code room', question: 'Can anyone join with the code?' }), 201, 'code room')
    // The facilitator made it; take them out so that joining is new for every caller.
    const codeRoomSecondFacilitator = await newPerson(baseUrl, 'matrix-code-owner')
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, \'facilitator\')', [codeRoom.id, codeRoomSecondFacilitator.user.id])
    await testDb().query('delete from room_members where room_id = $1 and user_id = $2', [codeRoom.id, userIds.fac])
    targets.joinCode = codeRoom.code
    minutesPdf = await sampleMinutesPdf('Minutes of the matrix room')
  }, 120_000)

  const cases = Object.entries(HTTP_MATRIX).flatMap(([route, row]) =>
    CALLERS.flatMap((caller, i) => row[i] === null ? [] : [[route, caller, row[i]!] as const]))

  it.each(cases)('%s as %s → %i', async (route, caller, expected) => {
    const request = REQUESTS[route]!
    const room = fresh[route] ?? main
    // A copy: a route that starts a session (sign-up, accepting an invitation signed out) must not
    // change who the persona is for the rows after it.
    const client = copyOf(clients[caller === 'xr' ? 'oth' : caller])
    const answer = await request.ask({ client, caller, room, roomId: caller === 'xr' ? otherRoom.id : room.id })
    expect({ status: answer.status, ...(answer.status >= 300 && typeof answer.body === 'object' ? { message: answer.body?.message } : {}) })
      .toMatchObject({ status: expected })
  })
})

describe('socket events, by caller', () => {
  type RoomSocket = Socket<ServerToClientEvents, ClientToServerEvents>
  const sockets = {} as Record<Persona, RoomSocket>
  const refusals = {} as Record<Persona, Error & { data?: { reason?: string } }>
  const rooms: Record<string, Room> = {}

  beforeAll(async () => {
    if (!clients.fac) throw new Error('the HTTP describe block sets up the people first')
    rooms['room:join'] = main
    rooms['room:leave'] = main
    rooms['weights:submit'] = await buildRoom('weights:submit', 'openWeighing')
    rooms['ballot:cast'] = await buildRoom('ballot:cast', 'openVote')
    await Promise.all(PERSONAS.map(persona => new Promise<void>((resolve) => {
      const socket: RoomSocket = connect(baseUrl, {
        transports: ['websocket'],
        reconnection: false,
        forceNew: true,
        ...(clients[persona].cookie ? { extraHeaders: { cookie: clients[persona].cookie } } : {}),
      })
      sockets[persona] = socket
      socket.once('connect', () => resolve())
      socket.once('connect_error', (error) => {
        refusals[persona] = error
        resolve()
      })
    })))
  }, 60_000)

  afterAll(() => {
    for (const socket of Object.values(sockets)) socket.disconnect()
  })

  const bodyFor = (event: string, room: Room) => {
    switch (event) {
      case 'weights:submit': return { roomId: room.id, weighingId: room.weighingId, idempotencyKey: randomUUID(), weights: [1, 1, 1] }
      case 'ballot:cast': return { roomId: room.id, voteId: room.voteId, idempotencyKey: randomUUID(), choices: Object.fromEntries(room.shortlist!.map(id => [id, 'approve'])) }
      default: return { roomId: room.id }
    }
  }

  const cases = Object.entries(SOCKET_MATRIX).flatMap(([event, row]) => PERSONAS.map((persona, i) => [event, persona, row[i]!] as const))

  it.each(cases)('%s as %s → %s', async (event, persona, expected) => {
    const socket = sockets[persona]
    if (expected === 'refused' || event === 'handshake') {
      if (expected === 'refused') {
        expect(socket.connected).toBe(false)
        expect(refusals[persona]?.message).toBe('Sign in first.')
        expect(refusals[persona]?.data?.reason).toBe('signed-out')
      }
      else {
        expect(refusals[persona]?.message).toBeUndefined()
        expect(socket.connected).toBe(true)
      }
      return
    }
    expect(socket.connected).toBe(true)
    const failures: { event: string, status: number }[] = []
    const onFailure = (f: { event: string, status: number }) => failures.push(f)
    socket.on('failure', onFailure)
    try {
      const body = bodyFor(event, rooms[event]!)
      if (expected === 'quiet') {
        socket.emit(event as 'room:leave', body as { roomId: string })
        await new Promise(resolve => setTimeout(resolve, 300))
        expect(failures).toEqual([])
        expect(socket.connected).toBe(true)
        return
      }
      const ack = await new Promise<Ack<unknown>>(resolve => (socket.emit as (...args: unknown[]) => void)(event, body, resolve))
      if (expected === 'ok') {
        expect(ack).toMatchObject({ ok: true })
        if (event === 'room:join') expect((ack as { data: JoinedRoom }).data.role).toBe(persona === 'fac' ? 'facilitator' : ROOM_ROLE_OF[persona as keyof typeof ROOM_ROLE_OF])
        await new Promise(resolve => setTimeout(resolve, 50))
        expect(failures.filter(f => f.event === event)).toEqual([])
      }
      else {
        expect(ack).toMatchObject({ ok: false, status: expected })
        await expect.poll(() => failures.filter(f => f.event === event)).toEqual([expect.objectContaining({ event, status: expected })])
      }
    }
    finally {
      socket.off('failure', onFailure)
    }
  })
})
