/**
 * PostgreSQL restarted under a running app (issue 9, faults b). This file makes its OWN throwaway
 * cluster (scripts/lib/postgres.mjs, migrated by scripts/migrate.ts) and its OWN built server on
 * it, so stopping the database does not disturb the other test files.
 *
 * While the database is down, requests must fail cleanly and quickly: 503 with the sentence
 * "The database is not reachable; try again shortly." (no stack, no bare 500), socket events
 * answered {ok:false, status:503}, /api/health 503, the process alive and its sockets connected.
 * Once PostgreSQL is back, the same process (same pid, never restarted) serves requests again, its
 * pool reconnecting by itself, and a submission over the socket that stayed open is stored.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process'
import { randomUUID } from 'node:crypto'
import { mkdtempSync, rmSync } from 'node:fs'
import { join } from 'node:path'
import pg from 'pg'
import { io as connect, type Socket } from 'socket.io-client'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { ClientToServerEvents, ServerToClientEvents } from '../../shared/types/realtime'
import { migrateDatabase } from '../../scripts/migrate'
// @ts-expect-error plain JavaScript module without types
import { ensureCluster, findBinaries, stopCluster } from '../../scripts/lib/postgres.mjs'
// @ts-expect-error plain JavaScript module without types
import { isRoot } from '../../scripts/lib/run.mjs'
import { Client, newPerson } from '../support/client'
import { freePort, waitForHealth } from '../support/server'

type RoomSocket = Socket<ServerToClientEvents, ClientToServerEvents>
const UNREACHABLE = 'The database is not reachable; try again shortly.'
/** A request during the gap must be answered within this (the pool's connection timeout is 10 s). */
const ANSWER_WITHIN_MS = 12_000

const criteria = [
  { id: 'cost', name: 'Cost', unit: '£k', direction: 'min' as const },
  { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' as const },
]
const alternatives = [
  { id: 'lean', name: 'Lean plan', scores: { cost: 10, reach: 100 } },
  { id: 'broad', name: 'Broad plan', scores: { cost: 50, reach: 900 } },
]

let work = ''
let dataDir = ''
let pgPort = 0
let databaseUrl = ''
let server: { baseUrl: string, child: ChildProcess } | undefined
/** The server's output: it must not report an uncaught exception when the database goes away. */
const serverLog: string[] = []
let db: pg.Pool | undefined
let socket: RoomSocket | undefined

/** pg_ctl as the cluster's owner (postgres when we are root), as scripts/lib/postgres.mjs runs it. */
function pgCtl(args: string[]) {
  const exe = join(findBinaries(), 'pg_ctl')
  const [cmd, argv] = isRoot() ? ['runuser', ['-u', 'postgres', '--', exe, ...args]] : [exe, args]
  const done = spawnSync(cmd, argv, { cwd: '/', encoding: 'utf8' })
  if (done.status !== 0) throw new Error(`pg_ctl ${args.join(' ')} failed: ${done.stderr}`)
}

/** A request, with how long it took; never waits more than 30 s (then it is a hang). */
async function timed(client: Client, method: string, path: string, body?: unknown) {
  const began = Date.now()
  const answer = await Promise.race([
    client.request(method, path, body),
    new Promise<never>((_, reject) => setTimeout(() => reject(new Error(`${method} ${path} hung for 30 s`)), 30_000)),
  ])
  return { ...answer, ms: Date.now() - began }
}

beforeAll(async () => {
  work = mkdtempSync('/tmp/counterpoise-dbrestart-')
  dataDir = join(work, 'pg')
  pgPort = await freePort()
  databaseUrl = ensureCluster({ dataDir, port: pgPort, throwaway: true })
  await migrateDatabase(databaseUrl)
  db = new pg.Pool({ connectionString: databaseUrl, max: 2 })
  db.on('error', () => { /* the cluster is stopped on purpose */ })
  // As tests/support/server.ts starts it, but keeping the output to read.
  const port = await freePort()
  const child = spawn(process.execPath, ['.output/server/index.mjs'], {
    env: { ...process.env, BASE_URL: '', DATABASE_URL: databaseUrl, NITRO_PORT: String(port), NITRO_HOST: '::', NODE_ENV: 'production' },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  for (const stream of [child.stdout!, child.stderr!]) {
    stream.setEncoding('utf8')
    stream.on('data', (chunk: string) => {
      serverLog.push(chunk)
      process.stderr.write(chunk)
    })
  }
  server = { baseUrl: `http://127.0.0.1:${port}`, child }
  await waitForHealth(server.baseUrl)
}, 120_000)

afterAll(async () => {
  socket?.disconnect()
  const child = server?.child
  if (child && child.exitCode === null && child.signalCode === null) {
    await new Promise(resolve => (child.once('exit', resolve), child.kill('SIGTERM')))
  }
  await db?.end().catch(() => {})
  if (dataDir) stopCluster(dataDir, { remove: true })
  if (work) rmSync(work, { recursive: true, force: true })
})

describe('PostgreSQL restarted while the app runs', () => {
  it('requests fail cleanly with 503 during the gap and work again after, without restarting the app', async () => {
    const baseUrl = server!.baseUrl
    const pid = server!.child!.pid
    const facilitator = await newPerson(baseUrl, 'dbrestart-facilitator')
    const stakeholder = await newPerson(baseUrl, 'dbrestart-stakeholder')
    const roomId = (await facilitator.client.post('/api/rooms', { title: 'Restart room', question: 'Which plan survives a restart?' })).body.id as string
    expect((await facilitator.client.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })).status).toBe(201)
    await db!.query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, stakeholder.user.id, 'stakeholder'])
    const opened = await facilitator.client.post(`/api/rooms/${roomId}/weighings`, { inputStyle: 'sliders' })
    expect(opened.status).toBe(201)
    const weighingId = opened.body.id as string

    socket = connect(baseUrl, { extraHeaders: { cookie: stakeholder.client.cookie }, transports: ['websocket'], reconnection: false, forceNew: true })
    await new Promise<void>((resolve, reject) => {
      socket!.once('connect', () => resolve())
      socket!.once('connect_error', reject)
    })
    const submit = (weights: number[]) => socket!.timeout(ANSWER_WITHIN_MS).emitWithAck('weights:submit', { roomId, weighingId, idempotencyKey: randomUUID(), weights })
    expect((await submit([1, 2])).ok).toBe(true)

    // ── the database goes away (fast shutdown: sessions are ended, as in a restart) ──
    pgCtl(['stop', '-D', dataDir, '-m', 'fast', '-w'])

    const health = await fetch(`${baseUrl}/api/health`)
    expect(health.status).toBe(503)
    const during = [
      await timed(facilitator.client, 'GET', '/api/rooms'),
      await timed(facilitator.client, 'GET', `/api/rooms/${roomId}/ledger`),
      await timed(facilitator.client, 'POST', '/api/rooms', { title: 'Made in the gap', question: 'Is this stored anywhere?' }),
      await timed(facilitator.client, 'PATCH', `/api/rooms/${roomId}`, { title: 'Renamed in the gap' }),
      await timed(new Client(baseUrl), 'POST', '/api/auth/sign-in', { email: facilitator.email, password: 'wrong-password-123' }),
    ]
    for (const answer of during) {
      expect(answer.status, JSON.stringify(answer.body)).toBe(503)
      expect(answer.body.message).toBe(UNREACHABLE)
      expect(JSON.stringify(answer.body)).not.toMatch(/ECONNREFUSED|\bat .+\(.*:\d+:\d+\)|stack/)
      expect(answer.ms).toBeLessThan(ANSWER_WITHIN_MS)
    }
    const refused = await submit([2, 1])
    expect(refused).toEqual({ ok: false, status: 503, message: UNREACHABLE })
    expect(server!.child!.exitCode).toBeNull()
    expect(socket.connected).toBe(true)
    expect(serverLog.join('')).toContain('[db] request failed, the database is not reachable')

    // ── the database comes back on the same port ──
    ensureCluster({ dataDir, port: pgPort, throwaway: true })
    const deadline = Date.now() + 30_000
    let healthy = false
    while (!healthy && Date.now() < deadline) {
      healthy = (await fetch(`${baseUrl}/api/health`)).status === 200
      if (!healthy) await new Promise(resolve => setTimeout(resolve, 200))
    }
    expect(healthy, 'the app did not reconnect to PostgreSQL within 30 s').toBe(true)
    expect(server!.child!.pid).toBe(pid)
    expect(server!.child!.exitCode).toBeNull()

    expect((await facilitator.client.get(`/api/rooms/${roomId}/ledger`)).status).toBe(200)
    const renamed = await facilitator.client.patch(`/api/rooms/${roomId}`, { title: 'Renamed after the restart' })
    expect(renamed.status).toBe(200)
    expect(renamed.body.title).toBe('Renamed after the restart')
    // The same socket, never reconnected, submits again.
    const after = await submit([1, 1])
    expect(after.ok, JSON.stringify(after)).toBe(true)
    expect(socket.connected).toBe(true)

    // Nothing from the gap was stored; the submission after it was, once.
    const { rows: gapRooms } = await db!.query('select count(*)::int as n from rooms where title = $1', ['Made in the gap'])
    expect(gapRooms[0].n).toBe(0)
    const { rows: stored } = await db!.query<{ weights: number[], revision: number }>('select weights, revision from submissions where weighing_id = $1', [weighingId])
    expect(stored).toHaveLength(1)
    expect(stored[0]!.revision).toBe(2)
    expect(stored[0]!.weights).toEqual([0.5, 0.5])
    const { rows: titles } = await db!.query<{ title: string }>('select title from rooms where id = $1', [roomId])
    expect(titles[0]!.title).toBe('Renamed after the restart')
    // Every lost connection was handled (Nitro would log and survive an uncaught one: not good enough).
    expect(serverLog.join('')).not.toMatch(/uncaughtException|unhandledRejection/)
  }, 150_000)
})
