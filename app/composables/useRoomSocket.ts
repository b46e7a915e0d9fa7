import { io, type Socket } from 'socket.io-client'
import type { Ack, ClientToServerEvents, HandshakeRefusal, JoinedRoom, MySubmission, RoomLiveState, ServerToClientEvents } from '~~/shared/types/realtime'
import type { RoomRole } from '~~/shared/roles'
import type { MyBallot, VoteView } from '~~/shared/types/resolution'

export type RoomSocket = Socket<ServerToClientEvents, ClientToServerEvents>
export type ConnectionState = 'connecting' | 'connected' | 'reconnecting' | 'offline' | 'signed-out'

/**
 * Rooms whose join the server refused as not (any longer) this person's (404) or not theirs to
 * see (403), by room id, with the server's message. Only sockets write it, so only in the browser.
 */
const refusals = reactive(new Map<string, string>())

/**
 * For a room page: the refusal its sockets met since the page opened, or null. Call it in the
 * page's setup: a new visit starts afresh, and a later successful join (say, after being invited
 * back) clears it.
 */
export function useRoomRefusal(roomId: MaybeRefOrGetter<string>) {
  refusals.delete(toValue(roomId))
  return computed(() => refusals.get(toValue(roomId)) ?? null)
}

/**
 * The live connection to one room. Joins on every (re)connect — the PostgreSQL adapter keeps no
 * state across reconnects, so the room is re-synced each time — and exposes the room's state,
 * the caller's role and own submission, the facilitator's list of names, and the connection
 * state for the indicator. Client-side only: call it from onMounted or a .client component.
 */
export function useRoomSocket(roomId: MaybeRefOrGetter<string>) {
  const state = shallowRef<RoomLiveState | null>(null)
  const role = ref<RoomRole | null>(null)
  const mine = shallowRef<MySubmission | null>(null)
  const names = ref<string[] | null>(null)
  const connection = ref<ConnectionState>('connecting')
  const lastFailure = ref<string | null>(null)
  const revealed = createEventHook<{ weighingId: string }>()
  const ledgerChanged = createEventHook<{ version: number }>()
  const joined = createEventHook<JoinedRoom>()
  const resolutionChanged = createEventHook<{ roomId: string }>()
  /** The final vote (open, or else latest) with its live tally, and the caller's ballot in it. */
  const vote = shallowRef<VoteView | null>(null)
  const myBallot = shallowRef<MyBallot | null>(null)

  // websocket first; long-polling only when the network refuses websockets.
  const socket: RoomSocket = io({ transports: ['websocket', 'polling'], reconnectionDelayMax: 5000, withCredentials: true })

  function forget() {
    state.value = null
    role.value = null
    mine.value = null
    names.value = null
    vote.value = null
    myBallot.value = null
  }

  // Only the newest join's answer counts: an older one may describe the room for a former role.
  let joinSeq = 0
  function join() {
    const id = toValue(roomId)
    const seq = ++joinSeq
    socket.emit('room:join', { roomId: id }, (answer: Ack<JoinedRoom>) => {
      if (seq !== joinSeq) return
      if (!answer.ok) {
        lastFailure.value = answer.message
        // No longer a member (removed while the page was open): what this page showed of the room
        // is no longer theirs to see; the page shows the refusal instead.
        if (answer.status === 404 || answer.status === 403) {
          forget()
          refusals.set(id, answer.message)
        }
        // The role changed while the server was answering: ask again for what the new role sees.
        if (answer.status === 409) setTimeout(join, 250)
        return
      }
      refusals.delete(id)
      role.value = answer.data.role
      state.value = answer.data.state
      mine.value = answer.data.mine
      vote.value = answer.data.vote ?? null
      myBallot.value = answer.data.myBallot ?? null
      joined.trigger(answer.data)
    })
  }

  // socket.io gives up after a handshake refused by the server (say, a server restarting whose
  // session check failed, or a session that ended): retry ourselves, backing off to 15 s.
  let retryTimer: ReturnType<typeof setTimeout> | undefined
  let retryDelay = 1000
  function retryLater() {
    clearTimeout(retryTimer)
    retryTimer = setTimeout(() => {
      if (!socket.connected) socket.connect()
    }, retryDelay)
    retryDelay = Math.min(retryDelay * 2, 15_000)
  }

  socket.on('connect', () => {
    connection.value = 'connected'
    retryDelay = 1000
    join()
  })
  socket.on('disconnect', (reason) => {
    connection.value = navigator.onLine ? 'reconnecting' : 'offline'
    // The server ends sockets on sign-out and on a password change; socket.io does not come back by
    // itself then. Try again: a still-valid session (the one that changed the password) carries on,
    // an ended one is told it is signed out.
    if (reason === 'io server disconnect') retryLater()
  })
  socket.io.on('reconnect_attempt', () => {
    connection.value = navigator.onLine ? 'reconnecting' : 'offline'
  })
  socket.on('connect_error', (error: Error & { data?: { reason?: HandshakeRefusal } }) => {
    connection.value = navigator.onLine ? 'reconnecting' : 'offline'
    if (socket.active) return // a network failure: the manager retries by itself
    if (error.data?.reason === 'signed-out') {
      connection.value = 'signed-out'
      lastFailure.value = error.message
    }
    retryLater()
  })
  socket.on('room:state', (next) => {
    if (next.roomId === toValue(roomId)) state.value = next
  })
  // Removed from the room, or given another role: join again, so the server sends what the new
  // role may see (a removed member's join is refused with a message).
  socket.on('room:membership', (body) => {
    if (body.roomId !== toValue(roomId)) return
    // What a former role could see goes at once, whether or not the join below succeeds.
    names.value = null
    vote.value = null
    join()
  })
  socket.on('weighing:names', (list) => {
    if (list.weighingId === state.value?.weighing?.id) names.value = list.names
  })
  socket.on('weighing:revealed', (body) => {
    if (body.roomId === toValue(roomId)) revealed.trigger({ weighingId: body.weighingId })
  })
  socket.on('ledger:changed', (body) => {
    if (body.roomId === toValue(roomId)) ledgerChanged.trigger({ version: body.version })
  })
  socket.on('vote:state', (body) => {
    if (body.roomId !== toValue(roomId)) return
    if (body.vote?.id !== vote.value?.id) myBallot.value = null
    vote.value = body.vote
  })
  socket.on('resolution:changed', (body) => {
    if (body.roomId === toValue(roomId)) resolutionChanged.trigger(body)
  })
  socket.on('failure', (body) => {
    lastFailure.value = body.message
  })

  /** Send weights; resolves with the server's answer (after its commit), or rejects after `timeoutMs`. */
  function submit(body: Parameters<ClientToServerEvents['weights:submit']>[0], timeoutMs = 8000) {
    return new Promise<Ack<MySubmission>>((resolve, reject) => {
      socket.timeout(timeoutMs).emit('weights:submit', body, (error: Error | null, answer: Ack<MySubmission>) => {
        if (error) return reject(error)
        if (answer.ok) mine.value = answer.data
        resolve(answer)
      })
    })
  }

  /** Cast a ballot; resolves with the server's answer (after its commit), or rejects after `timeoutMs`. */
  function castBallot(body: Parameters<ClientToServerEvents['ballot:cast']>[0], timeoutMs = 8000) {
    return new Promise<Ack<MyBallot>>((resolve, reject) => {
      socket.timeout(timeoutMs).emit('ballot:cast', body, (error: Error | null, answer: Ack<MyBallot>) => {
        if (error) return reject(error)
        if (answer.ok) myBallot.value = answer.data
        resolve(answer)
      })
    })
  }

  tryOnScopeDispose(() => {
    clearTimeout(retryTimer)
    socket.emit('room:leave', { roomId: toValue(roomId) })
    socket.disconnect()
  })

  return {
    socket,
    state,
    role,
    mine,
    names,
    connection,
    lastFailure,
    submit,
    vote,
    myBallot,
    castBallot,
    onResolutionChanged: resolutionChanged.on,
    onRevealed: revealed.on,
    onLedgerChanged: ledgerChanged.on,
    onJoined: joined.on,
  }
}
