/**
 * Property-based fuzzing (fast-check) of the real built server: generated malformed uploads,
 * weight vectors over the socket and JSON route bodies. Every input must be answered with a clear
 * refusal (a 4xx with a message, or an {ok:false} acknowledgement / 'failure' event with a 4xx
 * status), never a 500; the server must still answer /api/health; and the database must be
 * unchanged (row counts of every table, and the contents of the rooms under attack: the room rows,
 * their ledger versions, weighings, submissions, members, invitations and attachments).
 *
 * Size: FUZZ_RUNS generated inputs per property (default 100, three times that for the quick socket
 * property: about 1,400 inputs in two minutes on a loaded two-core machine; e.g. `FUZZ_RUNS=2000 npm test --
 * server tests/server/fuzz.test.ts` for a long run). FUZZ_SEED replays a run (fast-check prints the
 * seed and the shrunk counterexample of a failure). The number of inputs tried is printed at the end
 * ("[fuzz] … inputs tried").
 *
 * A generated input that the server would rightly ACCEPT (e.g. a garbling that leaves a valid
 * body) is not malformed: each property filters those out with the same zod schema the route uses
 * (or, for the socket, a small oracle of what `submitWeights` stores), so every input sent must be
 * refused. An upload whose garbling still parses cleanly is previewed (200, no problems) and then
 * confirmed with a stale base version, which must be refused (409) with nothing written.
 */
import { randomUUID } from 'node:crypto'
import { readFileSync } from 'node:fs'
import { join } from 'node:path'
import { destr } from 'destr'
import fc from 'fast-check'
import { io as connect, type Socket } from 'socket.io-client'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { z } from 'zod'
import { SignInBody, SignUpBody } from '../../shared/schemas/auth'
import { InviteBody, JoinRoomBody } from '../../shared/schemas/invitations'
import { LedgerBody } from '../../shared/schemas/ledger'
import { CreateRoomBody } from '../../shared/schemas/rooms'
import { OpenWeighingBody, SubmitWeightsBody } from '../../shared/schemas/weighing'
import type { ClientToServerEvents, ServerToClientEvents } from '../../shared/types/realtime'
import { newPerson, type Client } from '../support/client'
import { closeTestDb, testDb } from '../support/db'
import { KELDERWICK_CRITERIA } from '../fixtures/uploads/kelderwick'

const baseUrl = inject('baseUrl')
const RUNS = Number(process.env.FUZZ_RUNS || 100)
const SEED = process.env.FUZZ_SEED ? Number(process.env.FUZZ_SEED) : undefined
const runOptions = { numRuns: RUNS, ...(SEED !== undefined ? { seed: SEED } : {}), endOnFailure: false }
const FIXTURES = join(import.meta.dirname, '../fixtures/uploads')

type RoomSocket = Socket<ServerToClientEvents, ClientToServerEvents>

const criteria = [
  { id: 'cost', name: 'Cost', unit: '£k', direction: 'min' as const },
  { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' as const },
  { id: 'delay', name: 'Delay', unit: 'weeks', direction: 'min' as const },
]
const alternatives = [
  { id: 'lean', name: 'Lean plan', scores: { cost: 10, reach: 100, delay: 10 } },
  { id: 'broad', name: 'Broad plan', scores: { cost: 50, reach: 900, delay: 12 } },
]
const criterionIds = criteria.map(c => c.id)

/** What was tried, for the summary line (the README quotes it). */
const tried = { uploads: 0, uploadRequests: 0, cleanUploads: 0, socket: 0, routes: 0, paths: 0 }
const statuses = new Map<number, number>()
const tally = (status: number) => statuses.set(status, (statuses.get(status) ?? 0) + 1)

let facilitator: Client
let stakeholderCookie = ''
let roomId = ''
let uploadRoomId = ''
let weighingId = ''
let tables: string[] = []

// ───────────────────────────── the database, before and after ─────────────────────────────

/** Row counts of every table, and a digest of each table's rows for the rooms under attack. One query. */
async function snapshot() {
  const rooms = [roomId, uploadRoomId]
  const counts = tables.map(t => `(select count(*)::int from "${t}") as "${t}"`).join(', ')
  const digest = (from: string) => `(select md5(coalesce(string_agg(x::text, '|' order by x::text), '')) from ${from})`
  const { rows } = await testDb().query(`select ${counts},
    ${digest('rooms x where x.id = any($1::uuid[])')} as room_rows,
    ${digest('ledger_versions x where x.room_id = any($1::uuid[])')} as ledger_rows,
    ${digest('weighings x where x.room_id = any($1::uuid[])')} as weighing_rows,
    ${digest('submissions x where x.weighing_id in (select id from weighings where room_id = any($1::uuid[]))')} as submission_rows,
    ${digest('room_members x where x.room_id = any($1::uuid[])')} as member_rows,
    ${digest('invitations x where x.room_id = any($1::uuid[])')} as invitation_rows,
    ${digest('attachments x where x.room_id = any($1::uuid[])')} as attachment_rows`, [rooms])
  return rows[0] as Record<string, number | string>
}

async function expectHealthy() {
  const health = await fetch(`${baseUrl}/api/health`)
  expect(health.status, 'the server stopped answering /api/health').toBe(200)
}

/** Sends a request with a raw body; the answer's status and parsed body. */
async function sendRaw(method: string, path: string, body: string | FormData | undefined, contentType: string | undefined, cookie: string) {
  const headers: Record<string, string> = { accept: 'application/json' }
  if (contentType !== undefined && typeof body === 'string') headers['content-type'] = contentType
  if (cookie) headers.cookie = cookie
  const answer = await fetch(`${baseUrl}${path}`, { method, headers, body, redirect: 'manual' })
  const text = await answer.text()
  let parsed: any = text
  try {
    parsed = JSON.parse(text)
  }
  catch { /* keep the text */ }
  return { status: answer.status, body: parsed }
}

/** A refusal: 4xx and a message for the person. */
function expectRefusal(answer: { status: number, body: any }, what: string) {
  tally(answer.status)
  expect(answer.status, `${what}: ${JSON.stringify(answer.body).slice(0, 300)}`).toBeGreaterThanOrEqual(400)
  expect(answer.status, `${what}: ${JSON.stringify(answer.body).slice(0, 300)}`).toBeLessThan(500)
  expect(typeof answer.body?.message, `${what}: no message`).toBe('string')
  expect(answer.body.message.length).toBeGreaterThan(0)
}

beforeAll(async () => {
  const { rows } = await testDb().query<{ name: string }>(
    `select table_name as name from information_schema.tables
      where table_schema = 'public' and table_type = 'BASE TABLE' and table_name not like 'socket_io%' order by 1`)
  // socket_io_attachments is the socket.io adapter's own scratch table, written and pruned by itself.
  tables = rows.map(r => r.name)

  const owner = await newPerson(baseUrl, 'fuzz-facilitator')
  facilitator = owner.client
  roomId = (await facilitator.post('/api/rooms', { title: 'Fuzz room', question: 'Which plan stands up to junk?' })).body.id
  expect((await facilitator.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })).status).toBe(201)
  uploadRoomId = (await facilitator.post('/api/rooms', { title: 'Fuzz upload room', question: 'Which scheme stands up to junk files?' })).body.id
  expect((await facilitator.request('PUT', `/api/rooms/${uploadRoomId}/ledger`, { baseVersion: 0, criteria: KELDERWICK_CRITERIA, alternatives: [] })).status).toBe(201)

  const stakeholder = await newPerson(baseUrl, 'fuzz-stakeholder')
  await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, stakeholder.user.id, 'stakeholder'])
  stakeholderCookie = stakeholder.client.cookie
  const opened = await facilitator.post(`/api/rooms/${roomId}/weighings`, { inputStyle: 'sliders' })
  expect(opened.status).toBe(201)
  weighingId = opened.body.id
  // One stored submission, so its contents are there to be (not) changed.
  const socket = openSocket(stakeholderCookie)
  const stored = await socket.timeout(10_000).emitWithAck('weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), weights: [3, 2, 1] })
  expect(stored.ok).toBe(true)
  socket.disconnect()
})

afterAll(async () => {
  const total = tried.uploads + tried.socket + tried.routes + tried.paths
  const byStatus = [...statuses.entries()].sort((a, b) => a[0] - b[0]).map(([s, n]) => `${s}×${n}`).join(' ')
  console.info(`[fuzz] ${total} malformed inputs tried (FUZZ_RUNS=${RUNS}): ${tried.uploads} uploads (${tried.uploadRequests} requests, ${tried.cleanUploads} of them still parsing cleanly), `
    + `${tried.socket} socket submissions, ${tried.routes} route bodies, ${tried.paths} route paths; answers ${byStatus}; no 5xx, database unchanged`)
  await closeTestDb()
})

// ───────────────────────────── generators ─────────────────────────────

/** Any odd value a JSON body or a socket event can carry. */
const junk: fc.Arbitrary<unknown> = fc.oneof(
  fc.anything({ maxDepth: 3 }),
  fc.string({ maxLength: 40 }),
  fc.string({ unit: 'binary', maxLength: 20 }),
  fc.double(),
  fc.integer(),
  fc.constantFrom(null, true, false, '', ' ', 0, -1, 1e308, -0, '1', 'NaN', 'Infinity', '__proto__', '<script>alert(1)</script>', '\u0000', '\uD800', [], {}, [[]], { $ne: null }),
  fc.nat({ max: 300_000 }).map(n => 'x'.repeat(n)),
  fc.array(fc.anything({ maxDepth: 1 }), { maxLength: 50 }),
)

/** Structured junk around a valid example: whole junk, junk keys, junk values, one value replaced. */
function bodies(valid: Record<string, unknown>) {
  const keys = Object.keys(valid)
  const json = fc.oneof(
    { arbitrary: fc.anything({ maxDepth: 3 }), weight: 2 },
    { arbitrary: fc.dictionary(fc.oneof(fc.constantFrom(...keys, '__proto__', 'constructor', 'prototype'), fc.string({ maxLength: 10 })), junk, { maxKeys: 6 }), weight: 2 },
    { arbitrary: fc.record(Object.fromEntries(keys.map(k => [k, junk])), { requiredKeys: [] }), weight: 3 },
    { arbitrary: fc.tuple(fc.constantFrom(...keys), junk).map(([k, j]) => ({ ...valid, [k]: j })), weight: 4 },
    { arbitrary: fc.subarray(keys).map(drop => Object.fromEntries(Object.entries(valid).filter(([k]) => !drop.includes(k)))), weight: 1 },
  ).map(value => ({ text: JSON.stringify(value) ?? '', contentType: 'application/json' as string | undefined }))
  const raw = fc.record({
    text: fc.oneof(
      fc.string({ maxLength: 200 }),
      fc.string({ unit: 'binary', maxLength: 200 }),
      fc.constantFrom('{', '{"title":', '[1,2', 'null', '{"a":1}}', '\u0000', '{"__proto__":{"admin":true}}', '{"constructor":{"prototype":{"x":1}}}', 'true', '1e999', '"', '{}{}', '[]'),
      fc.uint8Array({ maxLength: 300 }).map(bytes => Buffer.from(bytes).toString('latin1')),
    ),
    contentType: fc.constantFrom('application/json', 'text/plain', 'application/x-www-form-urlencoded', 'multipart/form-data', 'application/json; charset=utf-16', 'application/xml', undefined),
  })
  return fc.oneof({ arbitrary: json, weight: 3 }, { arbitrary: raw, weight: 1 })
}

/** What validBody hands the schema for this body: h3's readBody (strict JSON for application/json, destr otherwise, forms, text), then `?? {}`. */
function asRead(text: string, contentType: string | undefined): unknown {
  if (!text) return {}
  if (contentType?.startsWith('application/x-www-form-urlencoded')) {
    const params = new URLSearchParams(text)
    const out: Record<string, unknown> = {}
    for (const key of params.keys()) {
      const all = params.getAll(key)
      out[key] = all.length > 1 ? all : all[0]
    }
    return out
  }
  if (contentType?.startsWith('text/')) return text
  const warn = console.warn
  console.warn = () => {} // destr warns about every __proto__ key it drops
  try {
    return destr(text, { strict: contentType === 'application/json' }) ?? {}
  }
  catch {
    return Symbol('not JSON: refused with 400')
  }
  finally {
    console.warn = warn
  }
}

// ───────────────────────────── (c) JSON route bodies ─────────────────────────────

interface Route { name: string, method: string, path: () => string, schema: z.ZodType, valid: Record<string, unknown>, signedIn: boolean }
const routes: Route[] = [
  { name: 'sign-up', method: 'POST', path: () => '/api/auth/sign-up', schema: SignUpBody, valid: { displayName: 'Fuzz person', email: 'fuzz@test.counterpoise.example', password: 'long-enough-password' }, signedIn: false },
  { name: 'sign-in', method: 'POST', path: () => '/api/auth/sign-in', schema: SignInBody, valid: { email: 'fuzz@test.counterpoise.example', password: 'long-enough-password' }, signedIn: false },
  { name: 'create room', method: 'POST', path: () => '/api/rooms', schema: CreateRoomBody, valid: { title: 'A room', question: 'Which option?' }, signedIn: true },
  { name: 'update room', method: 'PATCH', path: () => `/api/rooms/${roomId}`, schema: CreateRoomBody.partial(), valid: { title: 'A room', question: 'Which option?' }, signedIn: true },
  { name: 'save ledger', method: 'PUT', path: () => `/api/rooms/${roomId}/ledger`, schema: LedgerBody, valid: { baseVersion: 1, criteria, alternatives }, signedIn: true },
  { name: 'open weighing', method: 'POST', path: () => `/api/rooms/${roomId}/weighings`, schema: OpenWeighingBody, valid: { inputStyle: 'sliders', showNames: false, minutes: 5 }, signedIn: true },
  { name: 'invite', method: 'POST', path: () => `/api/rooms/${roomId}/invitations`, schema: InviteBody, valid: { email: 'someone@test.counterpoise.example', role: 'stakeholder' }, signedIn: true },
  { name: 'join by code', method: 'POST', path: () => '/api/join', schema: JoinRoomBody, valid: { code: 'K7MQ2P' }, signedIn: true },
]

describe('fuzzing the JSON routes', () => {
  it.each(routes.map(r => [r.name, r] as const))('%s: generated malformed bodies are refused with a 4xx and change nothing', async (_name, route) => {
    const before = await snapshot()
    await fc.assert(fc.asyncProperty(
      bodies(route.valid).filter(b => !route.schema.safeParse(asRead(b.text, b.contentType)).success),
      async ({ text, contentType }) => {
        tried.routes++
        const answer = await sendRaw(route.method, route.path(), text, contentType, route.signedIn ? facilitator.cookie : '')
        expectRefusal(answer, `${route.method} ${route.path()} with ${JSON.stringify(text.slice(0, 200))} (${contentType})`)
        await expectHealthy()
        expect(await snapshot()).toEqual(before)
      },
    ), runOptions)
  }, 600_000)

  it('junk room ids in paths answer 404 (or another 4xx) and change nothing', async () => {
    const before = await snapshot()
    const id = fc.oneof(fc.string({ minLength: 1, maxLength: 60 }), fc.string({ unit: 'binary', minLength: 1, maxLength: 20 }), fc.uuid().map(u => u.toUpperCase()), fc.uuid(), fc.constantFrom('null', 'undefined', '0', '-1', '1e9', `${'a'.repeat(5000)}`, '%00', '%2e%2e'))
      // Not ids with ? # / \: Nitro decodes the path before routing (/api/health%3Fx answers as
      // /api/health), so GET /api/rooms/%3F…/ledger reaches GET /api/rooms, the list: another URL,
      // not a malformed id. Slashes are left out for the same reason.
      .filter(s => s.trim() !== '' && s !== '.' && s !== '..' && !/[?#/\\]/.test(s) && s.toLowerCase() !== roomId && s.toLowerCase() !== uploadRoomId)
    const target = fc.constantFrom(
      { method: 'PATCH', tail: '', body: { title: 'Another title' } },
      { method: 'PUT', tail: '/ledger', body: { baseVersion: 0, criteria, alternatives } },
      { method: 'POST', tail: '/weighings', body: { inputStyle: 'sliders' } },
      { method: 'POST', tail: '/invitations', body: { email: 'x@test.counterpoise.example', role: 'observer' } },
      { method: 'GET', tail: '/ledger', body: undefined },
    )
    await fc.assert(fc.asyncProperty(id, target, async (junkId, { method, tail, body }) => {
      tried.paths++
      const answer = await sendRaw(method, `/api/rooms/${encodeURIComponent(junkId)}${tail}`, body === undefined ? undefined : JSON.stringify(body), 'application/json', facilitator.cookie)
      expectRefusal(answer, `${method} /api/rooms/${junkId.slice(0, 80)}${tail}`)
      await expectHealthy()
      expect(await snapshot()).toEqual(before)
    }), runOptions)
  }, 600_000)
})

// ───────────────────────────── (b) weight vectors over the socket ─────────────────────────────

function openSocket(cookie: string): RoomSocket {
  return connect(baseUrl, { extraHeaders: { cookie }, transports: ['websocket'], reconnection: false, forceNew: true })
}

/** Whether submitWeights would store this body for our stakeholder (then it is not malformed). */
function wouldStore(body: unknown): boolean {
  const parsed = SubmitWeightsBody.safeParse(body)
  if (!parsed.success) return false
  const b = parsed.data
  if (b.roomId !== roomId || b.weighingId !== weighingId || b.aspirations) return false
  if (b.weights) return b.weights.length === criterionIds.length && Math.max(...b.weights) > 0
  const ids = b.ranking!.flat()
  return new Set(ids).size === ids.length && ids.length === criterionIds.length && ids.every(id => criterionIds.includes(id))
}

describe('fuzzing weight vectors over the socket', () => {
  it('weights:submit with malformed bodies is refused (ack {ok:false} 4xx and a failure event) and changes nothing', async () => {
    const before = await snapshot()
    const valid = () => ({ roomId, weighingId, idempotencyKey: randomUUID(), weights: [1, 2, 3] as unknown })
    const number = fc.oneof(fc.double(), fc.integer({ min: -1e9, max: -1 }), fc.constantFrom(Number.NaN, Infinity, -Infinity, -1e-300, 1e308))
    const weightJunk = fc.oneof(
      fc.array(number, { maxLength: 40 }),
      fc.array(fc.oneof(number, fc.string({ maxLength: 5 }), fc.constant(null), fc.array(number, { maxLength: 3 }), fc.object({ maxDepth: 1 })), { maxLength: 8 }),
      fc.constantFrom([], [0, 0, 0], [-0, 0, 0], [1, 2], [1, 2, 3, 4], Array.from({ length: 31 }, () => 1), [1, -1, 1], ['1', '2', '3'], [[1], [2], [3]], { 0: 1, 1: 2, 2: 3, length: 3 }),
      junk,
    )
    const body = fc.oneof(
      { arbitrary: weightJunk.map(weights => ({ ...valid(), weights })), weight: 5 },
      { arbitrary: fc.tuple(fc.constantFrom('roomId', 'weighingId', 'idempotencyKey', 'weights'), junk).map(([k, j]) => ({ ...valid(), [k]: j })), weight: 3 },
      { arbitrary: fc.constantFrom('roomId', 'weighingId').chain(k => fc.uuid().map(u => ({ ...valid(), weights: [1, 2, 3], [k]: u }))), weight: 2 },
      { arbitrary: fc.subarray(['roomId', 'weighingId', 'idempotencyKey', 'weights'], { minLength: 1 }).map(drop => Object.fromEntries(Object.entries(valid()).filter(([k]) => !drop.includes(k)))), weight: 1 },
      { arbitrary: fc.array(fc.oneof(fc.constantFrom(...criterionIds, 'other', ''), fc.array(fc.constantFrom(...criterionIds, 'x'), { maxLength: 3 })), { maxLength: 6 }).map(ranking => ({ ...valid(), weights: undefined, ranking })), weight: 2 },
      { arbitrary: fc.array(fc.double(), { maxLength: 4 }).map(aspirations => ({ ...valid(), weights: undefined, aspirations })), weight: 1 },
      { arbitrary: fc.constant(null).map(() => ({ ...valid(), ranking: criterionIds })), weight: 1 },
      { arbitrary: fc.anything({ maxDepth: 3 }), weight: 2 },
    ).filter(b => !wouldStore(JSON.parse(JSON.stringify(b ?? null))))
    const withAck = fc.oneof({ arbitrary: fc.constant(true), weight: 4 }, { arbitrary: fc.constant(false), weight: 1 })

    let socket: RoomSocket | undefined
    let sentOnSocket = 0
    const failures: { event: string, status: number, message: string }[] = []
    const nextSocket = async () => {
      socket?.disconnect()
      socket = openSocket(stakeholderCookie)
      socket.on('failure', f => failures.push(f))
      await new Promise<void>((resolve, reject) => {
        socket!.once('connect', () => resolve())
        socket!.once('connect_error', reject)
      })
      sentOnSocket = 0
    }
    try {
      await fc.assert(fc.asyncProperty(body, withAck, async (sent, ack) => {
        // The server allows 40 events per socket per 10 s; a fresh socket keeps the limit out of the way.
        if (!socket?.connected || sentOnSocket >= 30) await nextSocket()
        sentOnSocket++
        tried.socket++
        const failuresBefore = failures.length
        const what = `weights:submit ${JSON.stringify(sent)?.slice(0, 300)} (${ack ? 'with' : 'without'} ack)`
        if (ack) {
          const answer = await socket!.timeout(10_000).emitWithAck('weights:submit', sent as any)
          tally(answer.ok ? 200 : answer.status)
          expect(answer.ok, what).toBe(false)
          if (answer.ok) return
          expect(answer.status, `${what}: ${answer.message}`).toBeGreaterThanOrEqual(400)
          expect(answer.status, `${what}: ${answer.message}`).toBeLessThan(500)
          expect(answer.message.length).toBeGreaterThan(0)
        }
        else {
          ;(socket!.emit as any)('weights:submit', sent)
        }
        // The 'failure' event follows the acknowledgement on the same connection.
        const deadline = Date.now() + 10_000
        while (failures.length === failuresBefore && Date.now() < deadline) await new Promise(resolve => setTimeout(resolve, 5))
        const failure = failures[failuresBefore]
        expect(failure, `${what}: no failure event`).toBeDefined()
        if (!ack) tally(failure!.status)
        expect(failure!.event).toBe('weights:submit')
        expect(failure!.status, `${what}: ${failure!.message}`).toBeGreaterThanOrEqual(400)
        expect(failure!.status, `${what}: ${failure!.message}`).toBeLessThan(500)
        expect(socket!.connected, `${what}: the socket was dropped`).toBe(true)
        await expectHealthy()
        expect(await snapshot()).toEqual(before)
      }), { ...runOptions, numRuns: 3 * RUNS })
    }
    finally {
      socket?.disconnect()
    }
    // No event without a body at all: socket.io hands the handler the ack as its body.
    await nextSocket()
    ;(socket!.emit as any)('weights:submit')
    const deadline = Date.now() + 10_000
    const count = failures.length
    while (failures.length === count && Date.now() < deadline) await new Promise(resolve => setTimeout(resolve, 5))
    expect(failures.at(-1)).toMatchObject({ event: 'weights:submit', status: 400 })
    socket!.disconnect()
    expect(await snapshot()).toEqual(before)
  }, 600_000)
})

// ───────────────────────────── (a) uploads ─────────────────────────────

const seedCsv = readFileSync(join(FIXTURES, 'kelderwick.csv'))
const seedXlsx = readFileSync(join(FIXTURES, 'kelderwick.xlsx'))

/** One garbling step on a file's bytes. */
const garble: fc.Arbitrary<(bytes: Buffer) => Buffer> = fc.oneof(
  fc.constantFrom(';', '\t', '|', ' ', ':', '"', ',,', '', '\u00a0', '，').map(d => (b: Buffer) => Buffer.from(b.toString('utf8').replaceAll(',', d))),
  fc.tuple(fc.double({ min: 0, max: 1, noNaN: true }), fc.oneof(
    fc.constantFrom('"', '""', '"\n', '\r', '\n', '\r\n', '\u0000', ',', ';', '\t', '\uFEFF', '=cmd|\' /C calc\'!A0', '\'=1+1', '1e999', 'NaN', '-Infinity', '#DIV/0!', '1,234.5', '12,5', '\u2212'),
    fc.string({ unit: 'binary', maxLength: 30 }),
    fc.nat({ max: 200_000 }).map(n => 'x'.repeat(n)),
    fc.nat({ max: 2_000 }).map(n => '9'.repeat(n)),
  )).map(([at, text]) => (b: Buffer) => {
    const i = Math.floor(at * b.length)
    return Buffer.concat([b.subarray(0, i), Buffer.from(text), b.subarray(i)])
  }),
  fc.double({ min: 0, max: 1, noNaN: true }).map(at => (b: Buffer) => b.subarray(0, Math.floor(at * b.length))),
  fc.tuple(fc.double({ min: 0, max: 1, noNaN: true }), fc.nat({ max: 200 })).map(([at, n]) => (b: Buffer) => {
    const i = Math.floor(at * b.length)
    return Buffer.concat([b.subarray(0, i), b.subarray(i + n)])
  }),
  fc.constantFrom(Buffer.from([0xEF, 0xBB, 0xBF]), Buffer.from([0xFF, 0xFE]), Buffer.from([0xFE, 0xFF]), Buffer.from([0xFF, 0xFE, 0, 0]), Buffer.from('PK\u0003\u0004'), Buffer.from('%PDF-1.4\n'))
    .map(prefix => (b: Buffer) => Buffer.concat([prefix, b])),
  fc.array(fc.tuple(fc.double({ min: 0, max: 1, noNaN: true }), fc.integer({ min: 0, max: 255 })), { minLength: 1, maxLength: 20 }).map(flips => (b: Buffer) => {
    const out = Buffer.from(b)
    for (const [at, byte] of flips) if (out.length) out[Math.min(out.length - 1, Math.floor(at * out.length))] = byte
    return out
  }),
  fc.constantFrom('latin1', 'utf16le', 'ucs2').map(encoding => (b: Buffer) => Buffer.from(b.toString('utf8'), encoding as BufferEncoding)),
  fc.nat({ max: 500 }).map(n => (b: Buffer) => {
    const [header, ...rows] = b.toString('utf8').split('\n')
    return Buffer.from([header, ...Array.from({ length: n }, (_, i) => rows[i % Math.max(1, rows.length)] ?? ''), ...rows].join('\n'))
  }),
)

const fileContent = fc.oneof(
  { arbitrary: fc.uint8Array({ maxLength: 4000 }).map(a => Buffer.from(a)), weight: 2 },
  { arbitrary: fc.array(garble, { minLength: 1, maxLength: 4 }).map(steps => steps.reduce<Buffer>((b, step) => step(b), seedCsv)), weight: 5 },
  { arbitrary: fc.array(garble, { minLength: 1, maxLength: 2 }).map(steps => steps.reduce<Buffer>((b, step) => step(b), seedXlsx)), weight: 2 },
  { arbitrary: fc.string({ maxLength: 500 }).map(s => Buffer.from(s)), weight: 1 },
)

/** Form fields that the route must refuse whatever the file (mode wrong, base version not a whole number ≥ 0, or no file part). */
const badFields = fc.oneof(
  fc.record({ mode: fc.option(fc.oneof(fc.string({ maxLength: 12 }), fc.constantFrom('Preview', 'CONFIRM', ' confirm', 'preview ', 'delete', '')), { nil: undefined }), baseVersion: fc.option(fc.string({ maxLength: 8 }), { nil: undefined }), filePart: fc.constant('file') })
    .filter(f => f.mode === undefined || !['preview', 'confirm'].includes(f.mode)),
  fc.record({ mode: fc.constantFrom('preview', 'confirm'), baseVersion: fc.oneof(fc.string({ maxLength: 8 }), fc.constantFrom('-1', '1.5', 'abc', '1e999', 'NaN', 'Infinity', '[1]')), filePart: fc.constant('file') })
    .filter(f => !(Number.isInteger(Number(f.baseVersion)) && Number(f.baseVersion) >= 0)),
  fc.record({ mode: fc.constantFrom('preview', 'confirm'), baseVersion: fc.constant('1'), filePart: fc.constantFrom('files', 'File', '', 'text-field') }),
)

async function upload(content: Buffer, filename: string, fields: { mode?: string, baseVersion?: string, filePart?: string }) {
  const form = new FormData()
  if (fields.filePart === 'text-field') form.set('file', content.toString('latin1'))
  else form.set(fields.filePart ?? 'file', new Blob([new Uint8Array(content)]), filename)
  if (fields.mode !== undefined) form.set('mode', fields.mode)
  if (fields.baseVersion !== undefined) form.set('baseVersion', fields.baseVersion)
  tried.uploadRequests++
  return sendRaw('POST', `/api/rooms/${uploadRoomId}/ledger/import`, form, undefined, facilitator.cookie)
}

describe('fuzzing uploads', () => {
  it('garbled and random files: the preview lists problems (or parses), confirming is refused, nothing is written', async () => {
    const before = await snapshot()
    const filename = fc.oneof(fc.constantFrom('ledger.csv', 'ledger.xlsx', 'ledger', '../../etc/passwd', 'C:\\x\\y.csv', '<b>x</b>.csv', '\u0000.csv', ''), fc.string({ maxLength: 40 }))
    await fc.assert(fc.asyncProperty(fileContent, filename, async (content, name) => {
      tried.uploads++
      const what = `upload of ${content.length} bytes named ${JSON.stringify(name)} starting ${JSON.stringify(content.subarray(0, 60).toString('latin1'))}`
      const preview = await upload(content, name, { mode: 'preview', baseVersion: '1' })
      tally(preview.status)
      expect(preview.status < 500, `${what}: preview answered ${preview.status} ${JSON.stringify(preview.body).slice(0, 300)}`).toBe(true)
      let clean = false
      if (preview.status === 200) {
        expect(preview.body.problemTotal, what).toEqual(expect.any(Number))
        clean = preview.body.problemTotal === 0
        for (const problem of preview.body.problems) expect(problem.message, what).toEqual(expect.any(String))
      }
      else {
        expectRefusal(preview, `${what} (preview)`)
      }
      if (clean) tried.cleanUploads++
      // A file that still parses is confirmed against a stale version (refused: 409); one with problems against the current one (refused: 422).
      const confirm = await upload(content, name, { mode: 'confirm', baseVersion: clean ? '0' : '1' })
      expectRefusal(confirm, `${what} (confirm${clean ? ', stale version' : ''})`)
      if (clean) expect(confirm.status, what).toBe(409)
      await expectHealthy()
      expect(await snapshot()).toEqual(before)
    }), runOptions)
  }, 600_000)

  it('wrong form fields and non-multipart bodies are refused with a 4xx and nothing written', async () => {
    const before = await snapshot()
    const request = fc.oneof(
      { arbitrary: fc.tuple(fileContent, badFields).map(([content, fields]) => ({ kind: 'form' as const, content, fields })), weight: 3 },
      { arbitrary: fc.record({ text: fc.oneof(fc.string({ maxLength: 200 }), fc.constant(seedCsv.toString('utf8'))), contentType: fc.constantFrom('application/json', 'text/csv', 'text/plain', 'application/octet-stream', 'multipart/form-data', 'multipart/form-data; boundary=xyz', 'multipart/form-data; boundary=') }).map(r => ({ kind: 'raw' as const, ...r })), weight: 2 },
    )
    await fc.assert(fc.asyncProperty(request, async (sent) => {
      tried.uploads++
      const answer = sent.kind === 'form'
        ? await upload(sent.content, 'ledger.csv', sent.fields)
        : (tried.uploadRequests++, await sendRaw('POST', `/api/rooms/${uploadRoomId}/ledger/import`, sent.text, sent.contentType, facilitator.cookie))
      expectRefusal(answer, `upload ${JSON.stringify(sent.kind === 'form' ? sent.fields : { contentType: sent.contentType, text: sent.text.slice(0, 80) })}`)
      await expectHealthy()
      expect(await snapshot()).toEqual(before)
    }), runOptions)
  }, 600_000)
})

// ───────────────────────────── the check can fail ─────────────────────────────

describe('the unchanged-database check', () => {
  it('notices a real change (a valid submission and a valid room update)', async () => {
    const before = await snapshot()
    const socket = openSocket(stakeholderCookie)
    const stored = await socket.timeout(10_000).emitWithAck('weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), weights: [1, 1, 5] })
    socket.disconnect()
    expect(stored.ok).toBe(true)
    const afterSubmission = await snapshot()
    expect(afterSubmission.submission_rows).not.toBe(before.submission_rows)
    expect(afterSubmission.audit_log).toBe(Number(before.audit_log) + 1)
    expect((await facilitator.patch(`/api/rooms/${roomId}`, { title: 'Fuzz room, renamed' })).status).toBe(200)
    expect((await snapshot()).room_rows).not.toBe(afterSubmission.room_rows)
  })
})
