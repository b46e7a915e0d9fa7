/**
 * The socket.io protocol between phones, consoles, galleries and the server. Both ends are typed
 * by these maps. The server never trusts ids from the client: it checks membership and role for
 * every event, and sends an `failure` answer (never a crash) when something is wrong.
 */
import type { RoomRole } from '../roles'
import type { InputStyle, WeighingStatus } from '../weighing'

export interface WeighingInfo {
  id: string
  number: number
  status: WeighingStatus
  inputStyle: InputStyle
  showNames: boolean
  ledgerVersion: number
  ledgerHash: string
  openedAt: string
  closesAt: string | null
  closedAt: string | null
  revealedAt: string | null
}

/** What everyone in a room may see live. */
export interface RoomLiveState {
  roomId: string
  /** The open weighing, or else the latest one; null before the first. */
  weighing: WeighingInfo | null
  /** Submissions in `weighing` (never whose, never the weights, until the reveal). */
  submitted: number
  /** Stakeholders who may submit. */
  eligible: number
}

/** What only the facilitator sees during an open weighing. */
export interface SubmittedNames {
  weighingId: string
  names: string[]
}

/** The caller's own submission in the current weighing, so a reloaded phone restores it. */
export interface MySubmission {
  weighingId: string
  weights: number[]
  ranking: (string | string[])[] | null
  idempotencyKey: string
  revision: number
  submittedAt: string
}

export type Ack<T> = { ok: true, data: T } | { ok: false, status: number, message: string }

export interface JoinedRoom {
  role: RoomRole
  state: RoomLiveState
  mine: MySubmission | null
}

export interface ClientToServerEvents {
  'room:join': (body: { roomId: string }, ack: (answer: Ack<JoinedRoom>) => void) => void
  'room:leave': (body: { roomId: string }) => void
  'weights:submit': (body: { roomId: string, weighingId: string, idempotencyKey: string, weights?: number[], ranking?: (string | string[])[] }, ack: (answer: Ack<MySubmission>) => void) => void
}

export interface ServerToClientEvents {
  'room:state': (state: RoomLiveState) => void
  'weighing:names': (names: SubmittedNames) => void
  /** A weighing was revealed: fetch its results. */
  'weighing:revealed': (body: { roomId: string, weighingId: string }) => void
  'ledger:changed': (body: { roomId: string, version: number }) => void
  /** An event was refused (bad input, wrong role, too many events); nothing was changed. */
  'failure': (body: { event: string, status: number, message: string }) => void
}

export interface SocketData {
  userId: string
  displayName: string
  rooms: Map<string, RoomRole>
}
