import type { Socket } from 'socket.io'
import { JoinRoomBody, SubmitWeightsBody } from '../../shared/schemas/weighing'
import { CastBallotBody } from '../../shared/schemas/resolution'
import { roleAllows } from '../../shared/roles'
import type { Ack, ClientToServerEvents, ServerToClientEvents, SocketData } from '../../shared/types/realtime'
import { fieldErrorsOf } from '../../shared/utils/fieldErrors'

type RealtimeSocket = Socket<ClientToServerEvents, ServerToClientEvents, Record<string, never>, SocketData>

/** Events one socket may send per window before it is told to slow down. */
export const SOCKET_EVENT_LIMIT = { events: 40, windowMs: 10_000 }

/** An error as an answer: HTTP-like status and a message for the person, never a stack. */
function failure(error: unknown): { ok: false, status: number, message: string } {
  const e = error as { statusCode?: number, message?: string }
  if (e?.statusCode && e.statusCode < 500) return { ok: false, status: e.statusCode, message: e.message ?? 'Refused.' }
  if (isDatabaseUnreachable(error)) return { ok: false, status: 503, message: DATABASE_UNREACHABLE_MESSAGE }
  console.error('[realtime] event failed:', error)
  return { ok: false, status: 500, message: 'The server could not do that just now. Try again in a moment.' }
}

const answer = <T>(ack: unknown, value: Ack<T>) => {
  if (typeof ack === 'function') ack(value)
}

/** Wire one authenticated socket's events. Every event re-checks membership and role in the database. */
export function registerSocketHandlers(socket: RealtimeSocket) {
  let windowStart = Date.now()
  let used = 0
  const allow = (event: string, ack: unknown) => {
    const now = Date.now()
    if (now - windowStart > SOCKET_EVENT_LIMIT.windowMs) {
      windowStart = now
      used = 0
    }
    if (++used <= SOCKET_EVENT_LIMIT.events) return true
    const refused = { ok: false as const, status: 429, message: 'Too many events from this device; wait a few seconds.' }
    answer(ack, refused)
    socket.emit('failure', { event, status: 429, message: refused.message })
    return false
  }

  /**
   * Joins of one room on this socket run one at a time: a join that finds the role changed under it
   * leaves the channels it chose, and must not do so after a newer join has chosen them again
   * (a client re-joins as soon as it hears of a membership change).
   */
  const joinQueues = new Map<string, Promise<unknown>>()
  function oneJoinAtATime<T>(roomId: string, task: () => Promise<T>): Promise<T> {
    const next = (joinQueues.get(roomId) ?? Promise.resolve()).then(task, task)
    joinQueues.set(roomId, next.catch(() => {}))
    return next
  }

  socket.on('room:join', async (body, ack) => {
    if (!allow('room:join', ack)) return
    try {
      const parsed = JoinRoomBody.safeParse(body)
      if (!parsed.success) throw createError({ statusCode: 400, message: Object.values(fieldErrorsOf(parsed.error.issues))[0] })
      const { roomId } = parsed.data
      await oneJoinAtATime(roomId, () => joinRoom(roomId, ack))
    }
    catch (error) {
      const refused = failure(error)
      answer(ack, refused)
      socket.emit('failure', { event: 'room:join', status: refused.status, message: refused.message })
    }
  })

  async function joinRoom(roomId: string, ack: unknown) {
    const { role } = await requireRoomMember(roomId, socket.data.userId)
    await socket.join(roomChannel(roomId))
    if (roleAllows(role, 'weighing:run')) await socket.join(facilitatorChannel(roomId))
    // A removal or role change that committed while this join was under way sent its "leave"
    // before the socket joined: look again, so channels chosen for a stale role are not kept.
    const now = await requireRoomMember(roomId, socket.data.userId).catch((error: unknown) => ({ error }))
    if ('error' in now || now.role !== role) {
      await socket.leave(roomChannel(roomId))
      await socket.leave(facilitatorChannel(roomId))
      if ('error' in now) throw now.error
      throw createError({ statusCode: 409, message: 'Your role in this room changed while joining; join again.' })
    }
    socket.data.rooms.set(roomId, role)
    // Reads shared with the other joins (and broadcasts) of this room that began no earlier than
    // this socket joined its channels: a crowd joining at once costs a few reads, none stale.
    const withBallots = roleAllows(role, 'weighing:run')
    const [state, vote] = await Promise.all([
      freshRead(`live:${roomId}`, () => liveState(roomId)),
      freshRead(`vote:${roomId}:${withBallots}`, () => currentVote(roomId, { withBallots })),
    ])
    const ballot = vote && roleAllows(role, 'vote:cast') ? await myBallot(roomId, socket.data.userId) : null
    answer(ack, { ok: true, data: { role, state, mine: roleAllows(role, 'weights:submit') ? await mySubmission(roomId, socket.data.userId) : null, vote, myBallot: ballot } })
    if (state.weighing && roleAllows(role, 'weighing:run')) {
      const weighingId = state.weighing.id
      socket.emit('weighing:names', { weighingId, names: await freshRead(`names:${weighingId}`, () => submittedNames(weighingId)) })
    }
  }

  socket.on('room:leave', async (body) => {
    const roomId = typeof body?.roomId === 'string' ? body.roomId : ''
    socket.data.rooms.delete(roomId)
    await socket.leave(roomChannel(roomId))
    await socket.leave(facilitatorChannel(roomId))
  })

  socket.on('weights:submit', async (body, ack) => {
    if (!allow('weights:submit', ack)) return
    try {
      const parsed = SubmitWeightsBody.safeParse(body)
      if (!parsed.success) throw createError({ statusCode: 400, message: Object.values(fieldErrorsOf(parsed.error.issues))[0] })
      const { role } = await requireRoomMember(parsed.data.roomId, socket.data.userId)
      if (!roleAllows(role, 'weights:submit')) throw createError({ statusCode: 403, message: `Your role in this room (${role}) does not submit weights.` })
      const { submission, changed } = await submitWeights(socket.data.userId, parsed.data)
      answer(ack, { ok: true, data: submission })
      if (changed) await broadcastRoomState(parsed.data.roomId)
    }
    catch (error) {
      const refused = failure(error)
      answer(ack, refused)
      socket.emit('failure', { event: 'weights:submit', status: refused.status, message: refused.message })
    }
  })

  socket.on('ballot:cast', async (body, ack) => {
    if (!allow('ballot:cast', ack)) return
    try {
      const parsed = CastBallotBody.safeParse(body)
      if (!parsed.success) throw createError({ statusCode: 400, message: Object.values(fieldErrorsOf(parsed.error.issues))[0] })
      const { role } = await requireRoomMember(parsed.data.roomId, socket.data.userId)
      if (!roleAllows(role, 'vote:cast')) throw createError({ statusCode: 403, message: `Your role in this room (${role}) does not vote.` })
      const { ballot, changed } = await castBallot(socket.data.userId, parsed.data)
      answer(ack, { ok: true, data: ballot })
      if (changed) await broadcastVoteState(parsed.data.roomId)
    }
    catch (error) {
      const refused = failure(error)
      answer(ack, refused)
      socket.emit('failure', { event: 'ballot:cast', status: refused.status, message: refused.message })
    }
  })
}
