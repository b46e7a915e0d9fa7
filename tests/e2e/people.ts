/**
 * People for end-to-end tests: accounts made through the real sign-up route, room membership set
 * directly in the database, and stakeholder "phones" as socket.io clients for the rounds a test
 * does not drive through a browser.
 */
import { randomUUID } from 'node:crypto'
import { request as apiRequest, type Page } from '@playwright/test'
import { io, type Socket } from 'socket.io-client'
import type { Criterion, Alternative } from '../../shared/types/decision'
import type { Ack, ClientToServerEvents, ServerToClientEvents } from '../../shared/types/realtime'
import { testDb } from '../support/db'
import { expect, uniqueEmail } from './fixtures'

type RoomSocket = Socket<ServerToClientEvents, ClientToServerEvents>

export const PASSWORD = 'a-long-enough-password'

const sockets: RoomSocket[] = []
/** Disconnect every phone socket a test left open (call from afterAll). */
export function closePhones() {
  for (const socket of sockets.splice(0)) socket.disconnect()
}

/** The session cookie from a sign-up answer's Set-Cookie headers. */
export function cookieOf(headers: { name: string, value: string }[]) {
  return headers.filter(h => h.name.toLowerCase() === 'set-cookie').map(h => h.value.split(';')[0]).join('; ')
}

/** Signs a facilitator up in `page` (its cookies are the page's) and saves a ledger in a new room. */
export async function roomWithLedger(page: Page, title: string, ledger: { criteria: Omit<Criterion, 'description'>[] | unknown[], alternatives: Alternative[] | unknown[] }, question = 'Which defence should the town build first?') {
  const signUp = await page.request.post('/api/auth/sign-up', { data: { displayName: 'Morag Facilitator', email: uniqueEmail('weigh-facilitator'), password: PASSWORD } })
  expect(signUp.status()).toBe(201)
  const room = await page.request.post('/api/rooms', { data: { title, question } })
  expect(room.status()).toBe(201)
  const { id } = await room.json()
  expect((await page.request.put(`/api/rooms/${id}/ledger`, { data: { baseVersion: 0, ...ledger } })).status()).toBe(201)
  return id as string
}

/** A new account; its session cookie is taken from the answer, not from a cookie jar. */
export async function account(baseURL: string, displayName: string) {
  const context = await apiRequest.newContext({ baseURL })
  const answer = await context.post('/api/auth/sign-up', { data: { displayName, email: uniqueEmail('weigh'), password: PASSWORD } })
  expect(answer.status()).toBe(201)
  const { id } = await answer.json()
  const cookie = cookieOf(answer.headersArray())
  await context.dispose()
  return { id: id as string, cookie, displayName }
}

/** A new account, made a member of the room with `role` directly in the database. */
export async function member(baseURL: string, roomId: string, displayName: string, role: 'stakeholder' | 'observer' | 'secretary') {
  const person = await account(baseURL, displayName)
  await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, person.id, role])
  return person
}

function emitAck<T>(socket: RoomSocket, event: 'room:join' | 'weights:submit', body: unknown): Promise<Ack<T>> {
  return new Promise(resolve => (socket.emit as (...args: unknown[]) => void)(event, body, resolve))
}

/** A stakeholder's phone, as a socket.io client: connects, joins the room and sends weights. */
export async function weigh(baseURL: string, person: { cookie: string }, roomId: string, weighingId: string, weights: number[]) {
  const socket: RoomSocket = io(baseURL, { extraHeaders: { cookie: person.cookie }, transports: ['websocket'], reconnection: false, forceNew: true })
  sockets.push(socket)
  await new Promise<void>((resolve, reject) => {
    socket.once('connect', () => resolve())
    socket.once('connect_error', reject)
  })
  expect(await emitAck(socket, 'room:join', { roomId })).toMatchObject({ ok: true })
  const answer = await emitAck(socket, 'weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), weights })
  socket.disconnect()
  return answer
}
