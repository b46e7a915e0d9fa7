/**
 * Live weighing rounds under load: `npm run bench:live` (50, 200 and 500 phones; about 3–5
 * minutes on 2 cores) or `npm run bench:live -- --quick` (50 phones only, about a minute), or
 * `npm run bench:live -- --phones=500` (chosen sizes only).
 * Needs a build: run `npx nuxt build` first (as `flock /tmp/counterpoise-build.lock npx nuxt build`
 * on a shared checkout).
 *
 * Everything is its own and stops by itself: a throwaway PostgreSQL cluster (removed at the end),
 * the migrations, a copy of .output (taken under a shared lock on the build lock file, so a
 * colleague's rebuild cannot change the server under the run), one server process on 127.0.0.1,
 * and a hard time limit on the whole run. Traffic goes to 127.0.0.1 only.
 *
 * For each N (50, 200, 500): a room with a small ledger, N stakeholders, 10 observers; the 10 big
 * screens are sockets in a separate process (so their arrival times are not held up by the N
 * phones' own work), the N phones are sockets in this process (tests/support/phone.ts: websocket
 * only, one submission in flight, resend with the same key). Two weighings per room:
 *  - spread: each phone "moves its sliders" for a random time in 0–10 s (three local changes, no
 *    traffic; one phone in ten re-joins the room meanwhile, as a reloaded page does), then submits;
 *  - burst: every phone submits at the same moment (the worst case: the server takes submissions
 *    to one weighing one at a time, because each locks the weighing row).
 * In both, one phone in ten changes its mind after the acknowledgement and submits again (a new
 * key, replacing the earlier weights).
 *
 * Latency of a first submission: from the moment it leaves the phone to the moment the LAST of the
 * 10 screens holds a `submitted` count that includes it. The k-th first submission to commit is
 * the one that brings the count to k, so a screen has "seen" it once any `room:state` it received
 * says submitted ≥ k. Commit order comes from PostgreSQL itself: the bench's cluster runs with
 * track_commit_timestamp, and each submission's audit entry carries its transaction's commit time
 * (pg_xact_commit_timestamp(xmin)); this stays right if submissions ever commit concurrently.
 * (Submissions share-lock the weighing row, so they do commit concurrently; should the setting be
 * unavailable, audit-id order is used, an approximation of commit order.) Times are on the
 * monotonic clock, shared by both processes. Revisions do not change the count and are left out
 * of the latencies (they are in subs/s and in the database checks).
 *
 * Columns: subs = committed submissions (first ones + revisions); subs/s = subs over the time from
 * the first send to the last acknowledgement; p50/p95/p99/max latency; server CPU = utime+stime
 * of the server process (/proc/<pid>/stat) over the round's wall time, 100 % = one core; server
 * peak RSS = VmHWM of the server process (/proc/<pid>/status; reset before each round through
 * /proc/<pid>/clear_refs when allowed); db CPU = the cluster's processes, the same way; phones
 * CPU = this process; errors = refused, lost or timed-out events, failures, server log errors and
 * screens that never saw a count. Database checks after each round: exactly one row per phone
 * holding its latest acknowledged weights and key (lost = phones without), revision equal to the
 * number of keys it sent and one audit entry per revision (dup = phones with more).
 *
 * Sockets: about 2 × (N + 10) descriptors on this machine (both ends); `ulimit -n` must be well
 * above that (1024 is tight for 500 phones; Debian's default hard limit allows raising it).
 */
import { fork, spawn, spawnSync, type ChildProcess } from 'node:child_process'
import { randomBytes } from 'node:crypto'
import { existsSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs'
import { cpus, loadavg } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import pg from 'pg'
import type { RoomLiveState } from '../../shared/types/realtime'
import { normaliseWeights } from '../../shared/utils/scalarise'
import { migrateDatabase } from '../../scripts/migrate'
// @ts-expect-error plain JavaScript module without types
import { ensureCluster, stopCluster } from '../../scripts/lib/postgres.mjs'
import { newPerson, type Client } from '../support/client'
import { now, Phone, RoomDevice } from '../support/phone'
import { freePort, waitForHealth } from '../support/server'

const SELF = fileURLToPath(import.meta.url)
const SCREENS = 10
const SPREAD_MS = 10_000
const REVISING_SHARE = 0.1
const REJOINING_SHARE = 0.1
const TARGET = { phones: 500, p95Ms: 150 }
/** Shared with npm test and builds on this checkout; COUNTERPOISE_BUILD_LOCK points a copy elsewhere. */
const BUILD_LOCK = process.env.COUNTERPOISE_BUILD_LOCK || '/tmp/counterpoise-build.lock'

const criteria = [
  { id: 'cost', name: 'Cost', unit: '£k', direction: 'min' as const },
  { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' as const },
  { id: 'delay', name: 'Delay', unit: 'weeks', direction: 'min' as const },
  { id: 'risk', name: 'Risk', unit: 'score', direction: 'min' as const },
]
const alternatives = [
  { id: 'lean', name: 'Lean plan', scores: { cost: 10, reach: 100, delay: 10, risk: 3 } },
  { id: 'broad', name: 'Broad plan', scores: { cost: 50, reach: 900, delay: 12, risk: 4 } },
  { id: 'quick', name: 'Quick plan', scores: { cost: 40, reach: 300, delay: 2, risk: 6 } },
  { id: 'safe', name: 'Safe plan', scores: { cost: 45, reach: 400, delay: 9, risk: 1 } },
  { id: 'worse', name: 'Worse plan', scores: { cost: 60, reach: 800, delay: 14, risk: 5 } },
]

const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))
const random = (a: number, b: number) => a + Math.random() * (b - a)

/** Fail after `ms` with a message naming what was awaited. */
function within<T>(promise: Promise<T>, ms: number, what: string): Promise<T> {
  let timer: NodeJS.Timeout
  return Promise.race([
    promise.finally(() => clearTimeout(timer)),
    new Promise<T>((_, reject) => (timer = setTimeout(() => reject(new Error(`${what}: no result within ${ms / 1000} s`)), ms))),
  ])
}

/** Poll `test` until true; false after `ms`. */
async function until(test: () => boolean, ms: number, everyMs = 50) {
  const deadline = Date.now() + ms
  while (!test()) {
    if (Date.now() > deadline) return false
    await sleep(everyMs)
  }
  return true
}

// ---------------------------------------------------------------------------------------------
// The screens process: 10 observer sockets recording every 'room:state' with its arrival time.

type StateRecord = [screen: number, at: number, submitted: number]
type ToScreens
  = | { type: 'connect', baseUrl: string, roomId: string, cookies: string[] }
    | { type: 'collect', weighingId: string, target: number, timeoutMs: number }
    | { type: 'disconnect' }
type FromScreens
  = | { type: 'connected', error?: string }
    | { type: 'collected', records: StateRecord[], reached: boolean[], problems: string[] }
    | { type: 'disconnected' }

function runScreens() {
  let screens: RoomDevice[] = []
  const records = new Map<string, StateRecord[]>()
  const best = new Map<string, number[]>()
  const reply = (message: FromScreens) => process.send!(message)
  process.on('disconnect', () => process.exit(0))
  process.on('message', async (message: ToScreens) => {
    if (message.type === 'connect') {
      try {
        screens = message.cookies.map((cookie, i) => new RoomDevice({
          baseUrl: message.baseUrl,
          cookie,
          roomId: message.roomId,
          ackTimeoutMs: 20_000,
          onState: (state: RoomLiveState, at: number) => {
            const id = state.weighing?.id
            if (!id) return
            if (!records.has(id)) records.set(id, [])
            records.get(id)!.push([i, at, state.submitted])
            const seen = best.get(id) ?? best.set(id, Array.from({ length: SCREENS }, () => 0)).get(id)!
            seen[i] = Math.max(seen[i]!, state.submitted)
          },
        }))
        await within(Promise.all(screens.map(s => s.start())), 30_000, 'screens joining')
        reply({ type: 'connected' })
      }
      catch (error) {
        reply({ type: 'connected', error: (error as Error).message })
      }
    }
    else if (message.type === 'collect') {
      const reachedAll = () => (best.get(message.weighingId) ?? []).filter(n => n >= message.target).length === screens.length
      await until(reachedAll, message.timeoutMs, 20)
      const seen = best.get(message.weighingId) ?? []
      reply({ type: 'collected', records: records.get(message.weighingId) ?? [], reached: screens.map((_, i) => (seen[i] ?? 0) >= message.target), problems: screens.flatMap(s => s.problems) })
    }
    else if (message.type === 'disconnect') {
      for (const screen of screens) screen.stop()
      screens = []
      records.clear()
      best.clear()
      reply({ type: 'disconnected' })
    }
  })
}

function screensProcess() {
  const child = fork(SELF, ['--screens'], { execArgv: process.execArgv, stdio: ['ignore', 'inherit', 'inherit', 'ipc'] })
  const ask = <T extends FromScreens['type']>(message: ToScreens, answer: T, ms: number) => within(new Promise<Extract<FromScreens, { type: T }>>((resolve, reject) => {
    const exited = (code: number | null) => reject(new Error(`the screens process exited (${code})`))
    const listener = (reply: FromScreens) => {
      if (reply.type !== answer) return
      child.off('message', listener)
      child.off('exit', exited)
      resolve(reply as Extract<FromScreens, { type: T }>)
    }
    child.on('message', listener)
    child.once('exit', exited)
    child.send(message)
  }), ms, `screens: ${message.type}`)
  return { child, ask }
}

// ---------------------------------------------------------------------------------------------
// Measuring processes through /proc.

const CLOCK_TICKS = Number(spawnSync('getconf', ['CLK_TCK'], { encoding: 'utf8' }).stdout.trim()) || 100

/** Fields after the command name in /proc/<pid>/stat (index 0 = state, 1 = ppid, 11 = utime, …). */
function statFields(pid: number): string[] | null {
  try {
    const text = readFileSync(`/proc/${pid}/stat`, 'utf8')
    return text.slice(text.lastIndexOf(')') + 2).split(' ')
  }
  catch {
    return null
  }
}

/** CPU seconds used by a process (user + system). */
function cpuSeconds(pid: number) {
  const f = statFields(pid)
  return f ? (Number(f[11]) + Number(f[12])) / CLOCK_TICKS : 0
}

/** CPU seconds of a PostgreSQL cluster: the postmaster, its live children, and its reaped ones. */
function clusterCpuSeconds(dataDir: string) {
  let postmaster: number
  try {
    postmaster = Number(readFileSync(join(dataDir, 'postmaster.pid'), 'utf8').split('\n')[0])
  }
  catch {
    return 0
  }
  const own = statFields(postmaster)
  if (!own) return 0
  let ticks = Number(own[11]) + Number(own[12]) + Number(own[13]) + Number(own[14])
  for (const entry of readdirSync('/proc')) {
    if (!/^\d+$/.test(entry)) continue
    const f = statFields(Number(entry))
    if (f && Number(f[1]) === postmaster) ticks += Number(f[11]) + Number(f[12])
  }
  return ticks / CLOCK_TICKS
}

function statusKb(pid: number, field: 'VmHWM' | 'VmRSS') {
  try {
    const match = new RegExp(`^${field}:\\s+(\\d+) kB`, 'm').exec(readFileSync(`/proc/${pid}/status`, 'utf8'))
    return match ? Number(match[1]) : 0
  }
  catch {
    return 0
  }
}

/** Reset the peak RSS (VmHWM) to the current RSS; false when the kernel does not allow it. */
function resetPeak(pid: number) {
  try {
    writeFileSync(`/proc/${pid}/clear_refs`, '5')
    return true
  }
  catch {
    return false
  }
}

// ---------------------------------------------------------------------------------------------
// One round.

type Arrival = 'spread' | 'burst'

interface RoundResult {
  phones: number
  arrival: Arrival
  subs: number
  perSecond: number
  latencies: number[]
  /** Emit → acknowledgement on the phone, first submissions. */
  ackLatencies: number[]
  serverCpu: number
  serverPeakMb: number
  dbCpu: number
  phonesCpu: number
  /** 1-minute load average at the end of the round: how busy the machine was. */
  load: number
  errors: number
  lost: number
  duplicated: number
  notes: string[]
}

interface Person { client: Client, id: string }

/** Slider positions 0–100, at least one above zero. */
function randomSliders(p: number) {
  const sliders = Array.from({ length: p }, () => Math.round(random(0, 100)))
  if (!sliders.some(s => s > 0)) sliders[0] = 50
  return sliders
}
function moveSlider(sliders: number[]) {
  const k = Math.floor(random(0, sliders.length))
  sliders[k] = Math.round(random(0, 100))
  if (!sliders.some(s => s > 0)) sliders[k] = 1
}

const percentile = (sorted: number[], q: number) => sorted.length ? sorted[Math.min(sorted.length - 1, Math.ceil(q * sorted.length) - 1)]! : Number.NaN

async function runRound(o: {
  arrival: Arrival
  phones: Phone[]
  people: Person[]
  roomId: string
  facilitator: Client
  screens: ReturnType<typeof screensProcess>
  db: pg.Pool
  serverPid: number
  dataDir: string
  serverErrors: () => number
  /** Whether the cluster records commit times (track_commit_timestamp). */
  commitTimes: boolean
}): Promise<RoundResult> {
  const { arrival, phones, people, roomId } = o
  const n = phones.length
  const notes: string[] = []
  const opened = await o.facilitator.post(`/api/rooms/${roomId}/weighings`, { inputStyle: 'sliders' })
  if (opened.status !== 201) throw new Error(`opening a weighing failed: ${opened.status} ${JSON.stringify(opened.body)}`)
  const weighingId: string = opened.body.id
  const weighingNumber: number = opened.body.number
  // Phones learn of the weighing as real ones do: from the broadcast.
  if (!await until(() => phones.every(p => p.state?.weighing?.id === weighingId), 30_000)) notes.push('some phones never heard of the new weighing')

  // Broadcast payloads of 8000 bytes or more go through this table instead of NOTIFY alone.
  const attachmentsMax = async () => Number((await o.db.query('select case when is_called then last_value else 0 end as n from socket_io_attachments_id_seq')).rows[0].n)
  const attachmentsBefore = await attachmentsMax()
  const errorsBefore = o.serverErrors()
  const problemsBefore = phones.reduce((sum, p) => sum + p.problems.length, 0)
  const peakReset = resetPeak(o.serverPid)
  if (!peakReset) notes.push('peak RSS is since the server started (clear_refs not allowed)')
  const start = { wall: now(), server: cpuSeconds(o.serverPid), db: clusterCpuSeconds(o.dataDir), self: process.cpuUsage() }

  const firstOf = new Map<Phone, ReturnType<Phone['submit']>>()
  const journeys = phones.map(async (phone) => {
    const sliders = randomSliders(criteria.length)
    if (arrival === 'spread') {
      const thinkMs = random(0, SPREAD_MS)
      const rejoinsAt = Math.random() < REJOINING_SHARE ? Math.floor(random(0, 3)) : -1
      for (let move = 0; move < 3; move++) {
        await sleep(thinkMs / 3)
        moveSlider(sliders) // local only: a slider moves on the phone, nothing is sent
        if (move === rejoinsAt) await phone.rejoin()
      }
    }
    const first = phone.submit(weighingId, sliders)
    firstOf.set(phone, first)
    await first.settled
    if (Math.random() < REVISING_SHARE) {
      await sleep(arrival === 'spread' ? random(200, 2_000) : 0)
      moveSlider(sliders)
      await phone.submit(weighingId, sliders).settled
    }
  })
  const settled = await within(Promise.all(journeys), SPREAD_MS + 60_000 + n * 300, `${n} phones, ${arrival}`).then(() => true, (error: Error) => {
    notes.push(error.message)
    return false
  })
  const collected = await o.screens.ask({ type: 'collect', weighingId, target: n, timeoutMs: settled ? 30_000 : 1_000 }, 'collected', 60_000)
  const end = { wall: now(), server: cpuSeconds(o.serverPid), db: clusterCpuSeconds(o.dataDir), self: process.cpuUsage(start.self) }
  const wallSeconds = (end.wall - start.wall) / 1000
  const serverPeakMb = statusKb(o.serverPid, 'VmHWM') / 1024

  const attachments = await attachmentsMax() - attachmentsBefore
  if (attachments) notes.push(`${attachments} broadcasts of 8000 bytes or more (the facilitators' list of names) went through socket_io_attachments before the round ended`)

  const closed = await o.facilitator.post(`/api/rooms/${roomId}/weighings/${weighingId}/close`)
  if (closed.status !== 200) notes.push(`closing the weighing answered ${closed.status}`)

  // The database is the judge: what was stored, and in which order the count went up.
  const userOf = new Map(phones.map((p, i) => [p, people[i]!.id]))
  const { rows: audit } = await o.db.query<{ actor: string, revision: number }>(
    `select actor_id as actor, (details->>'revision')::int as revision from audit_log
      where room_id = $1 and action = 'weights.submitted' and (details->>'weighing')::int = $2
      order by ${o.commitTimes ? 'pg_xact_commit_timestamp(xmin), ' : ''}id`, [roomId, weighingNumber])
  const countBrings = new Map<string, number>()
  const auditPerUser = new Map<string, number>()
  for (const row of audit) {
    auditPerUser.set(row.actor, (auditPerUser.get(row.actor) ?? 0) + 1)
    if (row.revision === 1 && !countBrings.has(row.actor)) countBrings.set(row.actor, countBrings.size + 1)
  }
  const { rows: stored } = await o.db.query<{ user_id: string, weights: number[], idempotency_key: string, revision: number }>(
    'select user_id, weights, idempotency_key, revision from submissions where weighing_id = $1', [weighingId])
  const storedOf = new Map<string, typeof stored>()
  for (const row of stored) storedOf.set(row.user_id, [...(storedOf.get(row.user_id) ?? []), row])

  let lost = 0
  let duplicated = 0
  for (const phone of phones) {
    const userId = userOf.get(phone)!
    const sent = phone.submissions.filter(s => s.weighingId === weighingId && s.sentAt !== null)
    const latest = sent.filter(s => s.status === 'acknowledged').at(-1)
    const rows = storedOf.get(userId) ?? []
    const row = rows[0]
    const expected = latest ? Array.from(normaliseWeights(latest.weights, criteria.length)) : null
    const holdsLatest = !!row && !!latest && row.idempotency_key === latest.idempotencyKey
      && row.weights.length === expected!.length && row.weights.every((w, k) => Math.abs(w - expected![k]!) < 1e-12)
    if (!holdsLatest) lost++
    if (rows.length > 1 || (row && (row.revision > sent.length || (auditPerUser.get(userId) ?? 0) > row.revision))) duplicated++
  }
  if (stored.length !== n) notes.push(`${stored.length} rows stored for ${n} phones`)

  // Latency of each first submission to the last screen.
  const firstSeen: number[][] = Array.from({ length: SCREENS }, () => [])
  const byScreen: StateRecord[][] = Array.from({ length: SCREENS }, () => [])
  for (const record of collected.records) byScreen[record[0]]!.push(record)
  byScreen.forEach((records, screen) => {
    records.sort((a, b) => a[1] - b[1])
    let highest = 0
    for (const [, at, submitted] of records) {
      for (let count = highest + 1; count <= submitted; count++) firstSeen[screen]![count] = at
      highest = Math.max(highest, submitted)
    }
  })
  const latencies: number[] = []
  let unseen = 0
  for (const phone of phones) {
    const first = firstOf.get(phone)
    const count = countBrings.get(userOf.get(phone)!)
    if (!first?.sentAt || first.status !== 'acknowledged' || count === undefined) continue
    const arrivals = firstSeen.map(seen => seen[count])
    if (arrivals.some(t => t === undefined)) {
      unseen++
      continue
    }
    latencies.push(Math.max(...(arrivals as number[])) - first.sentAt)
  }
  latencies.sort((a, b) => a - b)
  const ackLatencies = phones.map(p => firstOf.get(p)).filter(s => s?.ackedAt != null && s.sentAt != null).map(s => s!.ackedAt! - s!.sentAt!).sort((a, b) => a - b)

  const all = phones.flatMap(p => p.submissions.filter(s => s.weighingId === weighingId))
  const refused = all.filter(s => s.status === 'refused' || s.status === 'gave-up').length
  const resent = all.reduce((sum, s) => sum + Math.max(0, s.attempts - 1), 0)
  const problems = phones.reduce((sum, p) => sum + p.problems.length, 0) - problemsBefore
  const serverErrors = o.serverErrors() - errorsBefore
  const screensShort = collected.reached.filter(r => !r).length
  const errors = refused + resent + problems + serverErrors + screensShort + unseen
  if (errors) notes.push(`errors: ${refused} refused or given up, ${resent} resends, ${problems} phone failures, ${serverErrors} server log errors, ${screensShort} screens short of ${n}, ${unseen} counts never seen`)
  const acked = all.filter(s => s.ackedAt !== null)
  const firstSent = Math.min(...all.map(s => s.sentAt ?? Infinity))
  const lastAck = Math.max(...acked.map(s => s.ackedAt!))

  return {
    phones: n,
    arrival,
    subs: audit.length,
    perSecond: audit.length / ((lastAck - firstSent) / 1000),
    latencies,
    ackLatencies,
    serverCpu: (end.server - start.server) / wallSeconds,
    serverPeakMb,
    dbCpu: (end.db - start.db) / wallSeconds,
    phonesCpu: (end.self.user + end.self.system) / 1e6 / wallSeconds,
    load: loadavg()[0]!,
    errors,
    lost,
    duplicated,
    notes,
  }
}

// ---------------------------------------------------------------------------------------------
// The table.

const COLUMNS: [string, number][] = [
  ['phones', 6], ['arrival', 10], ['subs', 5], ['subs/s', 7], ['p50 ms', 7], ['p95 ms', 7], ['p99 ms', 7], ['max ms', 7], ['ack p95', 7],
  ['server CPU', 10], ['server peak RSS', 15], ['db CPU', 7], ['phones CPU', 10], ['errors', 6], ['lost', 4], ['dup', 3], ['load', 5],
]
function row(values: string[]) {
  return values.map((v, k) => (k === 1 ? v.padEnd(COLUMNS[k]![1]) : v.padStart(COLUMNS[k]![1]))).join('  ')
}
const ms = (v: number) => Number.isFinite(v) ? v.toFixed(v < 10 ? 1 : 0) : '—'
const pct = (v: number) => `${(v * 100).toFixed(0)} %`

function printTable(results: RoundResult[], facts: { quick: boolean, setupSeconds: number, accounts: number }) {
  const cpu = readFileSync('/proc/cpuinfo', 'utf8').match(/^model name\s*:\s*(.+)$/m)?.[1] ?? cpus()[0]?.model ?? 'unknown CPU'
  const nproc = spawnSync('nproc', { encoding: 'utf8' }).stdout.trim()
  console.log('')
  console.log(`Counterpoise live-round benchmark${facts.quick ? ' (--quick)' : ''} — ${new Date().toISOString().replace('T', ' ').slice(0, 16)} UTC`)
  console.log(`Machine: nproc ${nproc}, ${cpu}, Node ${process.version}, load average now ${loadavg().map(v => v.toFixed(2)).join(' ')}`)
  console.log(`One server process (built .output) and a throwaway PostgreSQL cluster on this machine; ${SCREENS} big screens in their own process; phones in this one.`)
  console.log(`Arrival: spread = each phone submits after 0–${SPREAD_MS / 1000} s of local slider moves; burst = all at once. ${REVISING_SHARE * 100} % of phones submit a second time.`)
  console.log(`load = the machine's 1-minute load average at the end of the round (${nproc} cores: above ${nproc} means processes were waiting for a core).`)
  console.log(`Latency: emit on the phone → the count including it on the last of ${SCREENS} screens (ack p95: emit → acknowledgement on the phone). Set-up (${facts.accounts} accounts, ${facts.setupSeconds.toFixed(0)} s) not counted.`)
  console.log('')
  console.log(row(COLUMNS.map(c => c[0])))
  for (const r of results) {
    const l = r.latencies
    console.log(row([String(r.phones), r.arrival, String(r.subs), r.perSecond.toFixed(1), ms(percentile(l, 0.5)), ms(percentile(l, 0.95)), ms(percentile(l, 0.99)), ms(l.at(-1) ?? Number.NaN), ms(percentile(r.ackLatencies, 0.95)),
      pct(r.serverCpu), `${r.serverPeakMb.toFixed(0)} MB`, pct(r.dbCpu), pct(r.phonesCpu), String(r.errors), String(r.lost), String(r.duplicated), r.load.toFixed(1)]))
  }
  const notes = results.flatMap(r => r.notes.map(note => `  ${r.phones} ${r.arrival}: ${note}`))
  if (notes.length) console.log(`\nNotes:\n${notes.join('\n')}`)

  const intact = results.length > 0 && results.every(r => r.lost === 0 && r.duplicated === 0)
  const atTarget = results.find(r => r.phones === TARGET.phones && r.arrival === 'spread')
  const burst = results.find(r => r.phones === TARGET.phones && r.arrival === 'burst')
  if (!atTarget) {
    console.log(`\nTargets: p95 under ${TARGET.p95Ms} ms at ${TARGET.phones} phones: NOT RUN (${facts.quick ? '--quick runs 50 phones only' : 'round failed'}); 0 lost or duplicated: ${intact ? 'PASS' : 'MISS'}`)
    return
  }
  const p95 = percentile(atTarget.latencies, 0.95)
  const pass = p95 < TARGET.p95Ms && intact && atTarget.latencies.length === TARGET.phones
  console.log(`\nTargets: p95 under ${TARGET.p95Ms} ms at ${TARGET.phones} phones, 0 lost or duplicated: ${pass ? 'PASS' : 'MISS'} `
    + `(spread p95 ${ms(p95)} ms over ${atTarget.latencies.length} submissions; lost ${results.reduce((s, r) => s + r.lost, 0)}, duplicated ${results.reduce((s, r) => s + r.duplicated, 0)} across all rounds`
    + `${burst ? `; burst p95 ${ms(percentile(burst.latencies, 0.95))} ms, for information` : ''})`)
}

// ---------------------------------------------------------------------------------------------

async function main() {
  const quick = process.argv.includes('--quick')
  // --phones=500 (or 50,500): only those sizes, e.g. to look at one of them again.
  const chosen = process.argv.find(a => a.startsWith('--phones='))?.slice('--phones='.length).split(',').map(Number).filter(n => Number.isInteger(n) && n > 0 && n <= 1000)
  const sizes = chosen?.length ? chosen : quick ? [50] : [50, 200, 500]
  const root = fileURLToPath(new URL('../..', import.meta.url))
  process.chdir(root)
  // Missing: either never built, or a colleague's build is writing it (wait for that one to finish).
  const built = () => existsSync('.output/server/index.mjs') || (spawnSync('flock', ['-s', '-w', '900', BUILD_LOCK, 'true']).status === 0 && existsSync('.output/server/index.mjs'))
  if (!built()) {
    console.error('No build in .output: run npx nuxt build first (flock /tmp/counterpoise-build.lock npx nuxt build).')
    process.exit(1)
  }
  const work = mkdtempSync('/tmp/counterpoise-bench-live-')
  const dataDir = join(work, 'pg')
  let server: ChildProcess | undefined
  let screens: ReturnType<typeof screensProcess> | undefined
  let db: pg.Pool | undefined
  let phones: Phone[] = []
  let cleaned = false
  let watchdog: NodeJS.Timeout | undefined
  async function cleanup() {
    if (cleaned) return
    cleaned = true
    for (const phone of phones) phone.stop()
    screens?.child.kill('SIGTERM')
    await db?.end().catch(() => {})
    if (server && server.exitCode === null) {
      const exited = new Promise(resolve => server!.once('exit', resolve))
      server.kill('SIGTERM')
      await within(exited, 10_000, 'server exit').catch(() => server!.kill('SIGKILL'))
    }
    stopCluster(dataDir, { remove: true })
    rmSync(work, { recursive: true, force: true })
  }
  process.once('SIGINT', () => void cleanup().finally(() => process.exit(130)))

  try {
    // A private copy of the build, taken while no one rebuilds it (a shared lock: builds and
    // `npm test` hold it exclusively, so this may wait for one of them to finish).
    console.log(`bench:live: copying .output under a shared lock on ${BUILD_LOCK} (waits while a build or npm test holds it, up to 20 min)`)
    // A build that does not take the lock can leave .output half-written: check, and try again.
    for (let attempt = 1; ; attempt++) {
      rmSync(join(work, 'output'), { recursive: true, force: true })
      const copy = spawnSync('flock', ['-s', '-w', '1200', BUILD_LOCK, 'cp', '-a', '.output', join(work, 'output')], { encoding: 'utf8' })
      if (copy.status !== 0) throw new Error(`could not copy .output (status ${copy.status}): ${copy.stderr || 'timed out waiting for the build lock'}`)
      if (existsSync(join(work, 'output/server/index.mjs')) && existsSync(join(work, 'output/nitro.json'))) break
      if (attempt === 5) throw new Error('.output stays incomplete (no server/index.mjs or nitro.json): run npx nuxt build first')
      console.log('bench:live: .output is incomplete (a build is writing it?); trying again in 30 s')
      await sleep(30_000)
    }

    // From here the whole run stops by itself, whatever happens.
    const began = Date.now()
    const limitMs = quick ? 600_000 : 1_800_000
    watchdog = setTimeout(() => {
      console.error(`bench:live: stopped after the time limit (${limitMs / 1000} s)`)
      void cleanup().finally(() => process.exit(2))
    }, limitMs)

    const pgPort = await freePort()
    let databaseUrl: string = ensureCluster({ dataDir, port: pgPort, throwaway: true })
    // Commit times tell the order in which the count went up; the setting needs a restart.
    stopCluster(dataDir)
    writeFileSync(join(dataDir, 'postgresql.auto.conf'), 'track_commit_timestamp = on\n', { flag: 'a' })
    databaseUrl = ensureCluster({ dataDir, port: pgPort, throwaway: true })
    await migrateDatabase(databaseUrl)
    db = new pg.Pool({ connectionString: databaseUrl, max: 2 })
    const commitTimes = (await db.query('show track_commit_timestamp')).rows[0].track_commit_timestamp === 'on'
    if (!commitTimes) console.log('bench:live: track_commit_timestamp is off; commit order taken from audit ids (the same while submissions lock the weighing row)')

    const port = await freePort()
    const baseUrl = `http://127.0.0.1:${port}`
    const env: NodeJS.ProcessEnv = { ...process.env, DATABASE_URL: databaseUrl, NUXT_SESSION_PASSWORD: randomBytes(32).toString('base64url'), NITRO_PORT: String(port), NITRO_HOST: '127.0.0.1', NODE_ENV: 'production' }
    delete env.BASE_URL
    server = spawn(process.execPath, [join(work, 'output/server/index.mjs')], { env, stdio: ['ignore', 'pipe', 'pipe'] })
    const serverLog: string[] = []
    let serverErrorCount = 0
    for (const stream of [server.stdout!, server.stderr!]) {
      stream.setEncoding('utf8')
      stream.on('data', (chunk: string) => {
        for (const line of chunk.split('\n').filter(Boolean)) {
          serverLog.push(line)
          if (serverLog.length > 200) serverLog.shift()
          if (/error|failed|exception/i.test(line)) serverErrorCount++
        }
      })
    }
    await waitForHealth(baseUrl)
    const serverPid = server.pid!

    // Accounts once per run, in parallel batches (scrypt on the server; not part of any round).
    const setupStart = Date.now()
    const facilitator = await newPerson(baseUrl, 'bench-facilitator')
    const stakeholders: Person[] = []
    const observers: Person[] = []
    const maxPhones = Math.max(...sizes)
    for (let i = 0; i < maxPhones + SCREENS; i += 10) {
      const batch = await Promise.all(Array.from({ length: Math.min(10, maxPhones + SCREENS - i) }, (_, k) => newPerson(baseUrl, `bench-${i + k}`)))
      for (const person of batch) (stakeholders.length < maxPhones ? stakeholders : observers).push({ client: person.client, id: person.user.id })
    }
    const setupSeconds = (Date.now() - setupStart) / 1000
    console.log(`bench:live: ${maxPhones + SCREENS + 1} accounts in ${setupSeconds.toFixed(0)} s; rounds of ${sizes.join(', ')} phones`)

    screens = screensProcess()
    const results: RoundResult[] = []
    for (const n of sizes) {
      const room = await facilitator.client.post('/api/rooms', { title: `Bench room, ${n} phones`, question: 'Which plan do we fund?' })
      if (room.status !== 201) throw new Error(`creating a room failed: ${room.status}`)
      const roomId: string = room.body.id
      const ledger = await facilitator.client.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })
      if (ledger.status !== 201) throw new Error(`saving the ledger failed: ${ledger.status} ${JSON.stringify(ledger.body)}`)
      const people = stakeholders.slice(0, n)
      const members = [...people.map(p => [p.id, 'stakeholder']), ...observers.map(o => [o.id, 'observer'])]
      await db.query('insert into room_members (room_id, user_id, role) select $1, unnest($2::uuid[]), unnest($3::room_role[])', [roomId, members.map(m => m[0]), members.map(m => m[1])])

      const connected = await screens.ask({ type: 'connect', baseUrl, roomId, cookies: observers.map(o => o.client.cookie) }, 'connected', 60_000)
      if (connected.error) throw new Error(`screens: ${connected.error}`)
      phones = people.map(p => new Phone({ baseUrl, cookie: p.client.cookie, roomId, ackTimeoutMs: 60_000 }))
      for (let i = 0; i < phones.length; i += 50) await within(Promise.all(phones.slice(i, i + 50).map(p => p.start(30_000))), 60_000, 'phones joining')

      for (const arrival of ['spread', 'burst'] as const) {
        const result = await runRound({ arrival, phones, people, roomId, facilitator: facilitator.client, screens, db, serverPid, dataDir, serverErrors: () => serverErrorCount, commitTimes })
        results.push(result)
        const l = result.latencies
        console.log(`bench:live: ${n} phones, ${arrival}: p95 ${ms(percentile(l, 0.95))} ms, ${result.subs} submissions, lost ${result.lost}, dup ${result.duplicated}, errors ${result.errors}`)
      }
      for (const phone of phones) phone.stop()
      phones = []
      await screens.ask({ type: 'disconnect' }, 'disconnected', 10_000)
    }
    printTable(results, { quick, setupSeconds, accounts: maxPhones + SCREENS + 1 })
    if (serverErrorCount) console.log(`\nServer log lines that look like errors: ${serverErrorCount}; the last lines:\n${serverLog.slice(-10).join('\n')}`)
    console.log(`\nTotal ${((Date.now() - began) / 1000).toFixed(0)} s`)
  }
  finally {
    clearTimeout(watchdog)
    await cleanup()
  }
}

if (process.argv.includes('--screens')) runScreens()
else {
  main().catch((error) => {
    console.error('bench:live failed:', error)
    process.exitCode = 1
  })
}
