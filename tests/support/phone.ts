/**
 * A simulated phone (or big screen) on a room's socket.io channel, shared by the live-round
 * benchmark (tests/bench/live.bench.ts) and the crash test (tests/server/crash.test.ts).
 *
 * It behaves as the app's own client should: websocket only; joins the room after every
 * (re)connection; keeps at most ONE submission in flight and resends it with the SAME idempotency
 * key until the server acknowledges it (after a reconnect, an ack timeout, or a 429/5xx answer).
 * A submission made while another is in flight waits behind it and replaces any older one still
 * waiting. One at a time matters: the server keeps only the latest key per person, so two
 * submissions in flight at once could be committed in the wrong order, and a resend of an older
 * key after a newer one was stored would be stored again as a new revision. A handshake the
 * server refuses (which socket.io-client does not retry by itself) is tried again after 1 s, ten
 * times at most.
 *
 * Times come from `now()`: the monotonic clock, comparable between processes on one machine.
 */
import { randomUUID } from 'node:crypto'
import { io, type Socket } from 'socket.io-client'
import type { Ack, ClientToServerEvents, JoinedRoom, MySubmission, RoomLiveState, ServerToClientEvents } from '../../shared/types/realtime'

export type RoomSocket = Socket<ServerToClientEvents, ClientToServerEvents>

/** Milliseconds on the monotonic clock (CLOCK_MONOTONIC: the same in every process of this machine). */
export const now = () => Number(process.hrtime.bigint()) / 1e6

const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

export interface DeviceOptions {
  baseUrl: string
  /** The session cookie (`name=value`), sent with every handshake. */
  cookie: string
  roomId: string
  /** socket.io-client's own reconnection with its default backoff (1 s doubling to 5 s, ±50 %). Default true. */
  reconnection?: boolean
  /** How long to wait for an acknowledgement before treating the event as lost. Default 10 s. */
  ackTimeoutMs?: number
  /** Called on every 'room:state' for this room, with its arrival time. */
  onState?: (state: RoomLiveState, at: number) => void
}

/** A socket that joins one room, and joins it again after every reconnection. */
export class RoomDevice {
  readonly socket: RoomSocket
  readonly roomId: string
  readonly ackTimeoutMs: number
  /** Successful connections: 1, plus one per reconnection. */
  connections = 0
  /** Successful joins (including re-joins). */
  joins = 0
  /** The last join's answer. */
  joined: JoinedRoom | null = null
  /** The latest live state received (join answer or broadcast). */
  state: RoomLiveState | null = null
  /** 'failure' events and refused or lost joins, for the caller to count. */
  readonly problems: string[] = []
  /** Connection events (disconnects, connection errors, reconnection attempts), for diagnosis. */
  readonly events: string[] = []
  /** Handshakes the server refused (its middleware said no), each tried again after 1 s, 10 at most. */
  refusals = 0
  private stopped = false
  private connection = 0
  private joinedConnection = -1
  private joiningConnection = -1
  private waiters: (() => void)[] = []

  constructor(readonly options: DeviceOptions) {
    this.roomId = options.roomId
    this.ackTimeoutMs = options.ackTimeoutMs ?? 10_000
    // Websocket only: no long-polling upgrade dance, and no sticky sessions needed between processes.
    this.socket = io(options.baseUrl, {
      transports: ['websocket'],
      extraHeaders: { cookie: options.cookie },
      reconnection: options.reconnection ?? true,
      forceNew: true,
      autoConnect: false,
    })
    this.socket.on('connect', () => {
      this.connections++
      this.connection++
      void this.join()
    })
    this.socket.on('room:state', (state) => {
      if (state.roomId !== this.roomId) return
      this.state = state
      this.options.onState?.(state, now())
    })
    this.socket.on('failure', failure => this.problems.push(`${failure.event}: ${failure.status} ${failure.message}`))
    this.socket.on('disconnect', reason => this.events.push(`disconnect: ${reason}`))
    this.socket.on('connect_error', (error) => {
      this.events.push(`connect_error: ${error.message} (active ${this.socket.active})`)
      // Refused by the server's handshake check (not a network error): socket.io-client stops
      // reconnecting. A refusal can be passing (a server that has just started), so try again a
      // few times, as the app's client should.
      if (this.socket.active || this.stopped) return
      this.refusals++
      this.problems.push(`handshake refused: ${error.message}`)
      if (this.refusals <= 10) setTimeout(() => this.stopped || this.socket.connect(), 1_000)
    })
    this.socket.io.on('reconnect_attempt', attempt => this.events.push(`reconnect attempt ${attempt}`))
  }

  /** Joined on the current connection. */
  get isJoined() {
    return this.socket.connected && this.joinedConnection === this.connection
  }

  /** Connect, join, and resolve once joined; rejects after `timeoutMs`. */
  async start(timeoutMs = 20_000) {
    this.socket.connect()
    await this.whenJoined(timeoutMs)
    return this.joined!
  }

  /** Resolve once joined on the current connection (waits through reconnections). */
  whenJoined(timeoutMs: number) {
    if (this.isJoined) return Promise.resolve()
    return new Promise<void>((resolve, reject) => {
      const timer = setTimeout(() => {
        this.waiters = this.waiters.filter(w => w !== done)
        reject(new Error(`not joined within ${timeoutMs} ms (connected: ${this.socket.connected}; ${this.problems.at(-1) ?? 'no failure reported'})`))
      }, timeoutMs)
      const done = () => {
        clearTimeout(timer)
        resolve()
      }
      this.waiters.push(done)
    })
  }

  /** Join again on the same connection, as a reloaded page does. */
  async rejoin() {
    this.joinedConnection = -1
    await this.join()
  }

  /** Hook for subclasses: runs after every successful join. */
  protected afterJoin() {}

  private async join(attempt = 1): Promise<void> {
    const connection = this.connection
    if (this.joiningConnection === connection) return
    this.joiningConnection = connection
    let answer: Ack<JoinedRoom> | null = null
    try {
      answer = await this.socket.timeout(this.ackTimeoutMs).emitWithAck('room:join', { roomId: this.roomId })
    }
    catch (error) {
      this.problems.push(`room:join lost: ${(error as Error).message}`)
    }
    finally {
      if (this.joiningConnection === connection) this.joiningConnection = -1
    }
    // A join answered on an older connection says nothing about this one: the 'connect' of the
    // new connection joins again.
    if (connection !== this.connection || !this.socket.connected) return
    if (answer?.ok) {
      this.joins++
      this.joined = answer.data
      this.state = answer.data.state
      this.joinedConnection = connection
      this.afterJoin()
      const waiters = this.waiters
      this.waiters = []
      for (const wake of waiters) wake()
      return
    }
    if (answer) this.problems.push(`room:join refused: ${answer.status} ${answer.message}`)
    // Refused (e.g. 429 or 5xx just after a restart) or lost: try again a few times on this connection.
    if (attempt < 5) {
      await sleep(500 * attempt)
      if (connection === this.connection && this.socket.connected) await this.join(attempt + 1)
    }
  }

  /** Close for good (no more reconnection). */
  stop() {
    this.stopped = true
    this.socket.disconnect()
  }
}

export type SubmissionStatus = 'waiting' | 'sent' | 'acknowledged' | 'refused' | 'superseded' | 'gave-up'

/** One submission as the phone made it, and what became of it. */
export interface PhoneSubmission {
  idempotencyKey: string
  weighingId: string
  weights: number[]
  status: SubmissionStatus
  /** When it first left the phone (null while waiting). */
  sentAt: number | null
  /** Times it was sent (1 when no resend was needed). */
  attempts: number
  ackedAt: number | null
  /** The server's acknowledgement: the stored submission. */
  ack: MySubmission | null
  /** The refusal, when the server said no (4xx other than 429). */
  refusal: { status: number, message: string } | null
  /** A re-join found this very key already stored: only its acknowledgement had been lost. */
  storedBeforeAck: boolean
  /** Resolves when acknowledged, refused, superseded or given up. */
  settled: Promise<PhoneSubmission>
}

export interface PhoneOptions extends DeviceOptions {
  /** Sends of one submission before giving up (each lost ack, timeout or 429/5xx counts). Default 12. */
  maxAttempts?: number
}

/** A stakeholder's phone: submits weights with acknowledgement, queue and resend on reconnect. */
export class Phone extends RoomDevice {
  /** Every submission made, in order. */
  readonly submissions: PhoneSubmission[] = []
  private current: PhoneSubmission | null = null
  private waiting: PhoneSubmission | null = null
  private inFlight = false
  private readonly settle = new Map<PhoneSubmission, (s: PhoneSubmission) => void>()
  private readonly maxAttempts: number

  constructor(options: PhoneOptions) {
    super(options)
    this.maxAttempts = options.maxAttempts ?? 12
  }

  /**
   * Submit weights (any non-negative scale) to a weighing with a new idempotency key. Sent at once
   * when nothing is in flight and the room is joined; otherwise it waits its turn.
   */
  submit(weighingId: string, weights: number[]): PhoneSubmission {
    let settle!: (s: PhoneSubmission) => void
    const submission: PhoneSubmission = {
      idempotencyKey: randomUUID(),
      weighingId,
      weights: [...weights],
      status: 'waiting',
      sentAt: null,
      attempts: 0,
      ackedAt: null,
      ack: null,
      refusal: null,
      storedBeforeAck: false,
      settled: new Promise(resolve => (settle = resolve)),
    }
    this.settle.set(submission, settle)
    this.submissions.push(submission)
    if (this.waiting) this.finish(this.waiting, 'superseded')
    this.waiting = submission
    this.pump()
    return submission
  }

  /** Nothing waiting or in flight. */
  get idle() {
    return !this.current && !this.waiting
  }

  /** The submission in flight (sent, not yet acknowledged), if any. */
  get unacknowledged() {
    return this.current
  }

  protected override afterJoin() {
    const mine = this.joined?.mine
    if (this.current && mine?.idempotencyKey === this.current.idempotencyKey) this.current.storedBeforeAck = true
    // Resend with the same key: the server answers with the stored submission if it already has it.
    this.pump()
  }

  private finish(submission: PhoneSubmission, status: SubmissionStatus) {
    submission.status = status
    if (this.current === submission) this.current = null
    if (this.waiting === submission) this.waiting = null
    this.settle.get(submission)?.(submission)
    this.settle.delete(submission)
  }

  private pump(): void {
    if (!this.current && this.waiting) {
      this.current = this.waiting
      this.waiting = null
    }
    const submission = this.current
    if (!submission || this.inFlight || !this.isJoined) return
    if (submission.attempts >= this.maxAttempts) {
      this.finish(submission, 'gave-up')
      return this.pump()
    }
    this.inFlight = true
    submission.attempts++
    submission.sentAt ??= now()
    submission.status = 'sent'
    const body = { roomId: this.roomId, weighingId: submission.weighingId, idempotencyKey: submission.idempotencyKey, weights: submission.weights }
    this.socket.timeout(this.ackTimeoutMs).emitWithAck('weights:submit', body).then(
      (answer) => {
        this.inFlight = false
        if (answer.ok) {
          submission.ack = answer.data
          submission.ackedAt = now()
          this.finish(submission, 'acknowledged')
          return this.pump()
        }
        if (answer.status === 429 || answer.status >= 500) {
          // Slowed down or a passing server fault: the same key again, a little later.
          setTimeout(() => this.pump(), answer.status === 429 ? 2_000 : 300)
          return
        }
        submission.refusal = { status: answer.status, message: answer.message }
        this.finish(submission, 'refused')
        this.pump()
      },
      () => {
        // No answer in time, or the connection dropped: resend when joined (again).
        this.inFlight = false
        if (this.isJoined) setTimeout(() => this.pump(), 100)
      },
    )
  }
}
