import { randomUUID } from 'node:crypto'
import { io as connect, type Socket } from 'socket.io-client'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Ack, ClientToServerEvents, JoinedRoom, MySubmission, RoomLiveState, ServerToClientEvents } from '../../shared/types/realtime'
import { newPerson } from '../support/client'
import { closeTestDb, testDb } from '../support/db'
import { groupMembers, startDevServer, type DevServer } from '../support/devServer'

/**
 * socket.io inside the Nuxt server must work in `nuxt dev` as in the built server (issue #5): the
 * dev server proxies requests and websocket upgrades to its Nitro worker, so the plugin's use of
 * the request and of crossws's private fields is exercised here too, with both transports.
 */
type RoomSocket = Socket<ServerToClientEvents, ClientToServerEvents>

let dev: DevServer | undefined
const sockets: RoomSocket[] = []
beforeAll(async () => {
  dev = await startDevServer()
}, 300_000)
afterAll(async () => {
  for (const socket of sockets) socket.disconnect()
  await dev?.stop()
  await closeTestDb()
}, 60_000)

const criteria = [
  { id: 'cost', name: 'Cost', unit: '£k', direction: 'min' as const },
  { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' as const },
]
const alternatives = [
  { id: 'cheap', name: 'Cheap plan', scores: { cost: 10, reach: 100 } },
  { id: 'broad', name: 'Broad plan', scores: { cost: 50, reach: 900 } },
]

function socketFor(baseUrl: string, cookie: string, transports: ('websocket' | 'polling')[]) {
  const socket: RoomSocket = connect(baseUrl, { extraHeaders: { cookie }, transports, reconnection: false, forceNew: true })
  sockets.push(socket)
  return new Promise<RoomSocket>((resolve, reject) => {
    socket.once('connect', () => resolve(socket))
    socket.once('connect_error', reject)
  })
}
function emitAck<T>(socket: RoomSocket, event: 'room:join' | 'weights:submit', body: unknown): Promise<Ack<T>> {
  return new Promise(resolve => (socket.emit as (...args: unknown[]) => void)(event, body, resolve))
}
/** The first room:state satisfying `test` within `ms`. */
function nextState(socket: RoomSocket, test: (s: RoomLiveState) => boolean, ms = 10_000) {
  return new Promise<RoomLiveState>((resolve, reject) => {
    const timer = setTimeout(() => {
      socket.off('room:state', listener)
      reject(new Error(`no matching room:state within ${ms} ms`))
    }, ms)
    const listener = (state: RoomLiveState) => {
      if (!test(state)) return
      clearTimeout(timer)
      socket.off('room:state', listener)
      resolve(state)
    }
    socket.on('room:state', listener)
  })
}

describe('socket.io in `nuxt dev`', () => {
  it('signs in, joins a room over a websocket and over long-polling, and hears the room\'s state', async () => {
    const baseUrl = dev!.baseUrl
    expect((await (await fetch(`${baseUrl}/api/health`)).json())).toMatchObject({ status: 'ok' })
    const facilitator = await newPerson(baseUrl, 'dev-facilitator')
    const stakeholder = await newPerson(baseUrl, 'dev-stakeholder')
    const room = await facilitator.client.post('/api/rooms', { title: 'Dev server room', question: 'Which plan?' })
    expect(room.status).toBe(201)
    const roomId = room.body.id as string
    expect((await facilitator.client.put(`/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })).status).toBe(201)
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, stakeholder.user.id, 'stakeholder'])

    // The facilitator's console over a websocket (the crossws hook), the phone over long-polling
    // (the plain HTTP handler); both authenticated from the session cookie.
    const desk = await socketFor(baseUrl, facilitator.client.cookie, ['websocket'])
    expect(desk.io.engine.transport.name).toBe('websocket')
    const phone = await socketFor(baseUrl, stakeholder.client.cookie, ['polling'])
    expect(phone.io.engine.transport.name).toBe('polling')
    expect(await emitAck<JoinedRoom>(desk, 'room:join', { roomId })).toMatchObject({ ok: true, data: { role: 'facilitator', state: { roomId, weighing: null, eligible: 1 } } })
    expect(await emitAck<JoinedRoom>(phone, 'room:join', { roomId })).toMatchObject({ ok: true, data: { role: 'stakeholder', mine: null } })

    // Opening a weighing through the API reaches both sockets as room:state.
    const seenByConsole = nextState(desk, s => s.roomId === roomId && s.weighing?.status === 'open')
    const seenByPhone = nextState(phone, s => s.roomId === roomId && s.weighing?.status === 'open')
    const opened = await facilitator.client.post(`/api/rooms/${roomId}/weighings`, { inputStyle: 'sliders' })
    expect(opened.status).toBe(201)
    const weighingId = opened.body.id as string
    expect((await seenByConsole).weighing).toMatchObject({ id: weighingId, number: 1 })
    expect((await seenByPhone).weighing?.id).toBe(weighingId)

    // A submission over long-polling is acknowledged after its commit, and the console hears the count.
    const counted = nextState(desk, s => s.weighing?.id === weighingId && s.submitted === 1)
    const submitted = await emitAck<MySubmission>(phone, 'weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), weights: [0.25, 0.75] })
    expect(submitted).toMatchObject({ ok: true, data: { weighingId, revision: 1 } })
    expect(await counted).toMatchObject({ submitted: 1, eligible: 1 })
    expect((await testDb().query('select count(*)::int as n from submissions where weighing_id = $1', [weighingId])).rows[0].n).toBe(1)
  }, 60_000)

  it('stops cleanly: no process of the dev server\'s group is left', async () => {
    const pgid = dev!.pgid
    expect(groupMembers(pgid).length).toBeGreaterThan(1)
    for (const socket of sockets.splice(0)) socket.disconnect()
    await dev!.stop()
    expect(groupMembers(pgid)).toEqual([])
    await expect(fetch(`${dev!.baseUrl}/api/health`)).rejects.toThrow()
  }, 60_000)
})
