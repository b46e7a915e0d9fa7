/**
 * Two app processes on one database, one of them stopped (issue 9, faults c). This file starts
 * its OWN two built servers, A and B, on the shared test database, and a small TCP switch in front
 * of them (node:net), standing in for a load balancer: phones (tests/support/phone.ts) and a big
 * screen connect to the switch's one address, which forwards to A.
 *
 * The round: every phone submits twice through A. Then the switch stops forwarding what the phones
 * send (packets lost on the way to a dying backend), every phone submits once more (sent, never
 * received), and A is stopped with SIGTERM. The switch then forwards new connections to B, as a
 * load balancer does once A fails its health check. socket.io-client reconnects to the same
 * address by itself; the phones join again and resend their unacknowledged submission with the
 * same idempotency key; B stores each one. They carry on (one more submission each through B), and
 * the database holds each acknowledged submission once: one row per phone with its latest weights,
 * its revision and audit entries counting the acknowledged submissions exactly.
 */
import { createServer, connect as tcpConnect, type Server, type Socket as TcpSocket } from 'node:net'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { normaliseWeights } from '../../shared/utils/scalarise'
import { newPerson, type Client } from '../support/client'
import { closeTestDb, testDb } from '../support/db'
import { Phone, RoomDevice, type PhoneSubmission } from '../support/phone'
import { alternatives, criteria, faultSize, sleep, sliders, until } from '../support/faults'
import { startBuiltServer, type RunningServer } from '../support/server'

const { phones: PHONES, scaled } = faultSize(6)
const portOf = (server: RunningServer) => Number(new URL(server.baseUrl).port)

/** A TCP switch: forwards each new connection to `target`; can stop forwarding what clients send on the connections it has. */
class TcpSwitch {
  target: number
  readonly connectionsTo = new Map<number, number>()
  private readonly server: Server
  private readonly pairs = new Set<{ client: TcpSocket, upstream: TcpSocket, held: boolean }>()

  constructor(target: number) {
    this.target = target
    this.server = createServer(client => this.forward(client))
  }

  listen() {
    return new Promise<number>((resolve) => {
      this.server.listen(0, '127.0.0.1', () => resolve((this.server.address() as { port: number }).port))
    })
  }

  /** Drop, from now on, whatever clients send on the connections open now. */
  holdOpenConnections() {
    for (const pair of this.pairs) pair.held = true
  }

  close() {
    for (const { client, upstream } of this.pairs) {
      client.destroy()
      upstream.destroy()
    }
    return new Promise<void>(resolve => this.server.close(() => resolve()))
  }

  private forward(client: TcpSocket) {
    const port = this.target
    this.connectionsTo.set(port, (this.connectionsTo.get(port) ?? 0) + 1)
    const upstream = tcpConnect(port, '127.0.0.1')
    const pair = { client, upstream, held: false }
    this.pairs.add(pair)
    client.on('data', (chunk) => {
      if (!pair.held) upstream.write(chunk)
    })
    upstream.on('data', chunk => client.write(chunk))
    const end = () => {
      this.pairs.delete(pair)
      client.destroy()
      upstream.destroy()
    }
    for (const socket of [client, upstream]) {
      socket.on('error', end)
      socket.on('close', end)
    }
  }
}

let a: RunningServer
let b: RunningServer
let tcpSwitch: TcpSwitch
let roomId = ''
let weighingId = ''
let weighingNumber = 0
let facilitator: Client
const people: { id: string, cookie: string }[] = []
let observerCookie = ''
const phones: Phone[] = []
let screen: RoomDevice | undefined

beforeAll(async () => {
  // Two processes of the same build on the same database (and the same session secret, from the environment).
  const env = { ...process.env, BASE_URL: '', NITRO_SHUTDOWN_TIMEOUT: '5000' }
  ;[a, b] = await Promise.all([startBuiltServer(env), startBuiltServer(env)])
  tcpSwitch = new TcpSwitch(portOf(a))
  const owner = await newPerson(a.baseUrl, 'failover-facilitator')
  facilitator = owner.client
  roomId = (await facilitator.post('/api/rooms', { title: 'Failover room', question: 'Which plan survives a failover?' })).body.id
  expect((await facilitator.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })).status).toBe(201)
  const accounts = await Promise.all(Array.from({ length: PHONES + 1 }, (_, i) => newPerson(a.baseUrl, `failover-${i}`)))
  for (const [i, account] of accounts.entries()) {
    const role = i < PHONES ? 'stakeholder' : 'observer'
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, account.user.id, role])
    if (role === 'stakeholder') people.push({ id: account.user.id, cookie: account.client.cookie })
    else observerCookie = account.client.cookie
  }
  const opened = await facilitator.post(`/api/rooms/${roomId}/weighings`, { inputStyle: 'sliders' })
  expect(opened.status).toBe(201)
  weighingId = opened.body.id
  weighingNumber = opened.body.number
}, scaled(120_000, 500))

afterAll(async () => {
  for (const phone of phones) phone.stop()
  screen?.stop()
  await tcpSwitch?.close()
  const running = (server?: RunningServer) => server?.child && server.child.exitCode === null && server.child.signalCode === null
  await Promise.all([running(a) ? a.stop() : undefined, running(b) ? b.stop() : undefined])
  await closeTestDb()
})

describe('two app processes, one stopped', () => {
  it('the phones reconnect to the other process, resend what was not acknowledged, and carry on; each submission is stored once', async () => {
    const switchUrl = `http://127.0.0.1:${await tcpSwitch.listen()}`
    // A phone gives up waiting for an answer after 5 s (and asks again); with 200 phones arriving
    // at once, B needs longer to answer them all (a browser waits as long as it takes).
    const ackTimeoutMs = scaled(5_000, 50)
    for (const person of people) phones.push(new Phone({ baseUrl: switchUrl, cookie: person.cookie, roomId, ackTimeoutMs }))
    screen = new RoomDevice({ baseUrl: switchUrl, cookie: observerCookie, roomId, ackTimeoutMs })
    await Promise.all([...phones, screen].map(device => device.start(scaled(20_000, 150))))
    expect(tcpSwitch.connectionsTo.get(portOf(a))).toBeGreaterThanOrEqual(PHONES + 1)

    // Through A: two acknowledged submissions from every phone.
    for (let round = 0; round < 2; round++) {
      const settled = await Promise.all(phones.map(phone => phone.submit(weighingId, sliders()).settled))
      expect(settled.map(s => s.status)).toEqual(phones.map(() => 'acknowledged'))
    }

    // A is going away: what the phones send now is lost on the way, then A stops.
    tcpSwitch.holdOpenConnections()
    const lost = phones.map(phone => phone.submit(weighingId, sliders()))
    await sleep(300)
    expect(lost.map(s => s.status)).toEqual(phones.map(() => 'sent'))
    const { rows: notThere } = await testDb().query('select 1 from submissions where idempotency_key = any($1)', [lost.map(s => s.idempotencyKey)])
    expect(notThere).toEqual([])
    await a.stop()
    expect(a.child!.exitCode !== null || a.child!.signalCode !== null).toBe(true)
    // The load balancer notices and sends new connections to B.
    tcpSwitch.target = portOf(b)
    const switchedAt = Date.now()

    const recovered = await until(() => phones.every(p => p.idle && p.isJoined) && screen!.isJoined, scaled(45_000, 300))
    const recoveredInMs = Date.now() - switchedAt
    expect(recovered, `not recovered: ${[...phones, screen].map(d => `connected=${d.socket.connected} joined=${d.isJoined} problems=[${d.problems.join(' | ')}] events=[${d.events.slice(-6).join(' | ')}]`).join('; ')}`).toBe(true)
    expect(tcpSwitch.connectionsTo.get(portOf(b))).toBeGreaterThanOrEqual(PHONES + 1)
    for (const device of [...phones, screen]) {
      expect(device.connections).toBeGreaterThanOrEqual(2)
      expect(device.joins).toBeGreaterThanOrEqual(2)
    }
    // Every lost submission was sent again, with its key, and acknowledged by B.
    for (const s of lost) {
      expect(s.status).toBe('acknowledged')
      expect(s.attempts).toBeGreaterThanOrEqual(2)
      expect(s.storedBeforeAck).toBe(false)
    }

    // They carry on through B.
    const after = await Promise.all(phones.map(phone => phone.submit(weighingId, sliders()).settled))
    expect(after.map(s => s.status)).toEqual(phones.map(() => 'acknowledged'))

    // The database: each acknowledged submission once.
    const isAcked = (s: PhoneSubmission) => s.status === 'acknowledged'
    const { rows: stored } = await testDb().query<{ user_id: string, key: string, weights: number[], revision: number }>(
      'select user_id, idempotency_key as key, weights, revision from submissions where weighing_id = $1', [weighingId])
    expect(stored).toHaveLength(PHONES)
    const { rows: audit } = await testDb().query<{ actor: string, n: number }>(
      `select actor_id as actor, count(*)::int as n from audit_log
        where room_id = $1 and action = 'weights.submitted' and (details->>'weighing')::int = $2 group by actor_id`, [roomId, weighingNumber])
    const auditOf = new Map(audit.map(r => [r.actor, r.n]))
    phones.forEach((phone, i) => {
      const sent = phone.submissions.filter(isAcked)
      expect(sent).toHaveLength(phone.submissions.length)
      expect(sent).toHaveLength(4)
      sent.forEach((s, k) => expect(s.ack!.revision).toBe(k + 1))
      const row = stored.find(r => r.user_id === people[i]!.id)!
      expect(row.key).toBe(sent.at(-1)!.idempotencyKey)
      expect(row.weights).toEqual(Array.from(normaliseWeights(sent.at(-1)!.weights, criteria.length)))
      expect(row.revision).toBe(4)
      expect(auditOf.get(people[i]!.id)).toBe(4)
    })
    console.info(`[failover] ${PHONES} phones and a screen moved from A to B in ${(recoveredInMs / 1000).toFixed(1)} s; ${lost.length} lost submissions resent (attempts ${Math.min(...lost.map(s => s.attempts))}–${Math.max(...lost.map(s => s.attempts))}); connections A ${tcpSwitch.connectionsTo.get(portOf(a))}, B ${tcpSwitch.connectionsTo.get(portOf(b))}`)

    // The big screen, now on B, is in step with the database.
    expect(await until(() => screen!.state?.weighing?.id === weighingId && screen!.state?.submitted === PHONES, 10_000)).toBe(true)
  }, scaled(150_000, 1_500))
})
