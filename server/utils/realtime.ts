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

/**
 * Tell everyone in the room (in every process, through the PostgreSQL adapter) where the room
 * stands, and the facilitators who has submitted. Never throws: a broadcast that fails must not
 * undo a committed change; phones re-sync on their next join.
 */
export async function broadcastRoomState(roomId: string) {
  if (!io) return
  try {
    const state = await liveState(roomId)
    io.to(roomChannel(roomId)).emit('room:state', state)
    if (state.weighing) {
      io.to(facilitatorChannel(roomId)).emit('weighing:names', { weighingId: state.weighing.id, names: await submittedNames(state.weighing.id) })
    }
  }
  catch (error) {
    console.error('[realtime] broadcast failed:', (error as Error).message)
  }
}

/** End every socket of a user (sign-out, role change): sessions are checked only at the handshake. */
export function disconnectUser(userId: string) {
  io?.in(userChannel(userId)).disconnectSockets(true)
}
