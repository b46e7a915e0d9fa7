/**
 * The end of a meeting: the final vote on the shortlist, the recorded resolution (the decision
 * and its reasons), and the signed minutes that cite both. Shared by the server routes, the
 * socket events and the pages. Times are ISO 8601 strings.
 */
import type { AlternativeStatus } from './decision'

export const BALLOT_CHOICES = ['approve', 'object', 'abstain'] as const
export type BallotChoice = (typeof BALLOT_CHOICES)[number]

export type VoteStatus = 'open' | 'closed'

/** One alternative's line in the tally. */
export interface TallyRow {
  alternativeId: string
  name: string
  approve: number
  object: number
  abstain: number
}

/** A final vote on a shortlist of one option-table version. */
export interface VoteView {
  id: string
  status: VoteStatus
  ledgerVersion: number
  ledgerHash: string
  /** Alternative ids on the ballot, in ballot order. */
  shortlist: string[]
  openedAt: string
  closedAt: string | null
  /** Stakeholders who cast a ballot / who may. */
  cast: number
  eligible: number
  tally: TallyRow[]
  /**
   * Whether the room shows names (every weighing in it was opened with names shown): only then
   * may the facilitator see who chose what. Stakeholders, observers and secretaries never do.
   */
  namesShown: boolean
  /** Each ballot with its caster's name: sent to facilitators only, and only when `namesShown`. */
  ballots?: { name: string, choices: Record<string, BallotChoice> }[]
}

/** The caller's own ballot, so a reloaded phone restores it. */
export interface MyBallot {
  voteId: string
  choices: Record<string, BallotChoice>
  idempotencyKey: string
  revision: number
  castAt: string
  /**
   * Only on the answer to a late resend whose key a later ballot of the same person already
   * replaced: nothing was stored, and the rest of this object is that later ballot.
   */
  superseded?: true
}

/** The decision as recorded by the facilitator. Frozen once the secretary signs the minutes. */
export interface ResolutionView {
  id: string
  /** Set when this record amends an earlier, frozen one. */
  amends: string | null
  ledgerVersion: number
  ledgerHash: string
  alternativeId: string
  alternativeName: string
  /** What the engine said of the chosen alternative in that version. */
  engineStatus: AlternativeStatus
  /** The engine's words for it, e.g. "Dominated by North Wall — worse on Capital cost" or "Efficient". */
  engineWords: string
  /** Required when the engine found the chosen alternative dominated or infeasible. */
  justification: string | null
  rationale: string
  conditions: string
  dissent: string
  recordedBy: string
  recordedAt: string
  frozenAt: string | null
}

/** A signed minutes file this server holds. */
export interface MinutesRecordView {
  id: string
  resolutionId: string
  sha256: string
  signer: string
  signedAt: string
  fileName: string
  bytes: number
  /** When the minutes were last e-mailed to participants, and to how many. */
  sentAt: string | null
  sentTo: number
}
