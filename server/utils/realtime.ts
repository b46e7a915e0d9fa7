import type { Server } from 'socket.io'
import type { ClientToServerEvents, ServerToClientEvents, SocketData } from '../../shared/types/realtime'

export type RealtimeServer = Server<ClientToServerEvents, ServerToClientEvents, Record<string, never>, SocketData>

let io: RealtimeServer | undefined

/** Called once by server/plugins/socket.ts. */
export function setRealtime(server: RealtimeServer) {
  io = server
}

export function useRealtime() {
  return io
}

export const roomChannel = (roomId: string) => `room:${roomId}`
export const facilitatorChannel = (roomId: string) => `room:${roomId}:facilitators`
export const userChannel = (userId: string) => `user:${userId}`

/** Shortest gap between two state broadcasts to one room (per process); changes in between are coalesced. */
export const BROADCAST_GAP_MS = 100

/** Rooms with a broadcast under way or just sent, and whether another change came meanwhile. */
const throttled = new Map<string, { again: boolean }>()

/**
 * Tell everyone in the room (in every process, through the PostgreSQL adapter) where the room
 * stands, and the facilitators who has submitted. The first change is sent at once; changes that
 * come while one is being sent, or within BROADCAST_GAP_MS of it, are coalesced into one more
 * broadcast after the gap, so a burst of 500 submissions costs a few dozen broadcasts, not 500,
 * and the last state always goes out. Never throws: a broadcast that fails must not undo a
 * committed change; phones re-sync on their next join.
 */
export async function broadcastRoomState(roomId: string): Promise<void> {
  if (!io) return
  const slot = throttled.get(roomId)
  if (slot) {
    slot.again = true
    return
  }
  const mine = { again: false }
  throttled.set(roomId, mine)
  try {
    await sendRoomState(roomId)
  }
  finally {
    setTimeout(() => {
      throttled.delete(roomId)
      if (mine.again) void broadcastRoomState(roomId)
    }, BROADCAST_GAP_MS).unref()
  }
}

async function sendRoomState(roomId: string) {
  if (!io) return
  try {
    // Shared with joins of the room that asked no earlier (server/utils/freshRead.ts).
    const state = await freshRead(`live:${roomId}`, () => liveState(roomId))
    io.to(roomChannel(roomId)).emit('room:state', state)
    if (state.weighing) {
      const weighingId = state.weighing.id
      io.to(facilitatorChannel(roomId)).emit('weighing:names', { weighingId, names: await freshRead(`names:${weighingId}`, () => submittedNames(weighingId)) })
    }
  }
  catch (error) {
    console.error('[realtime] broadcast failed:', (error as Error).message)
  }
}

/** End every socket of a user (sign-out, password change): sessions are checked only at the handshake. */
export function disconnectUser(userId: string) {
  io?.in(userChannel(userId)).disconnectSockets(true)
}

/**
 * After a member's removal or role change has committed: the channels a socket joined at
 * `room:join` were chosen for the old role, so every socket of that user (in every process, through
 * the adapter) leaves the room's channels at once, and is told to join again — a join checks the
 * membership afresh, so a removed member is refused and a new facilitator gets the names. Then the
 * room hears the new counts of who may weigh and vote. Never throws: the change is already stored.
 */
export async function membershipChanged(roomId: string, userId: string) {
  if (!io) return
  try {
    // What io.in(…).socketsLeave(…) does, awaited: the PostgreSQL adapter resolves once its
    // "leave" message is out, so the other processes hear it before the broadcasts below.
    await io.of('/').adapter.delSockets({ rooms: new Set([userChannel(userId)]), except: new Set() }, [roomChannel(roomId), facilitatorChannel(roomId)])
    io.to(userChannel(userId)).emit('room:membership', { roomId })
  }
  catch (error) {
    console.error('[realtime] membership change not sent:', (error as Error).message)
  }
  await Promise.all([broadcastRoomState(roomId), broadcastVoteState(roomId)])
}
