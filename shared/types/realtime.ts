/**
 * The socket.io protocol between phones, consoles, galleries and the server. Both ends are typed
 * by these maps. The server never trusts ids from the client: it checks membership and role for
 * every event, and sends an `failure` answer (never a crash) when something is wrong.
 */
import type { RoomRole } from '../roles'
import type { InputStyle, WeighingStatus } from '../weighing'
import type { BallotChoice, MyBallot, VoteView } from './resolution'

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
  /** Targets per criterion (criterion units and order), for a weighing in reference-point mode. */
  aspirations?: number[] | null
  idempotencyKey: string
  revision: number
  submittedAt: string
  /**
   * Only on the answer to a late resend whose key a later submission of the same person already
   * replaced: nothing was stored, and the rest of this object is that later submission.
   */
  superseded?: true
}

/** Why the server refused a socket's handshake (`connect_error`'s `data.reason`). */
export type HandshakeRefusal = 'signed-out' | 'unavailable'

export type Ack<T> = { ok: true, data: T } | { ok: false, status: number, message: string }

export interface JoinedRoom {
  role: RoomRole
  state: RoomLiveState
  mine: MySubmission | null
  /** The open (or latest) final vote, and the caller's ballot in it (stakeholders only). */
  vote?: VoteView | null
  myBallot?: MyBallot | null
}

export interface ClientToServerEvents {
  'room:join': (body: { roomId: string }, ack: (answer: Ack<JoinedRoom>) => void) => void
  'room:leave': (body: { roomId: string }) => void
  'weights:submit': (body: { roomId: string, weighingId: string, idempotencyKey: string, weights?: number[], ranking?: (string | string[])[], aspirations?: number[] }, ack: (answer: Ack<MySubmission>) => void) => void
  /** A stakeholder's ballot in the open final vote; acknowledged after it is stored. */
  'ballot:cast': (body: { roomId: string, voteId: string, idempotencyKey: string, choices: Record<string, BallotChoice> }, ack: (answer: Ack<MyBallot>) => void) => void
}

export interface ServerToClientEvents {
  'room:state': (state: RoomLiveState) => void
  'weighing:names': (names: SubmittedNames) => void
  /** A weighing was revealed: fetch its results. */
  'weighing:revealed': (body: { roomId: string, weighingId: string }) => void
  'ledger:changed': (body: { roomId: string, version: number }) => void
  /** The final vote and its live tally (with who chose what only for facilitators, and only when the room shows names). */
  'vote:state': (body: { roomId: string, vote: VoteView | null }) => void
  /** A resolution was recorded, edited, amended or frozen: fetch the list again. */
  'resolution:changed': (body: { roomId: string }) => void
  /** The caller's membership or role in this room changed: the socket has left the room's channels; join again. */
  'room:membership': (body: { roomId: string }) => void
  /** An event was refused (bad input, wrong role, too many events); nothing was changed. */
  'failure': (body: { event: string, status: number, message: string }) => void
}

export interface SocketData {
  userId: string
  displayName: string
  rooms: Map<string, RoomRole>
}
