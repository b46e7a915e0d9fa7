import type { PairFront } from '../utils/chartData'
/**
 * The content of a room's minutes: what the preview page shows and the PDF prints, assembled once
 * on the server (server/utils/minutesContent.ts) so both say the same. Plain data; times are ISO 8601.
 *
 * Anonymity rule: a weighing opened without names shows its weightings as "Stakeholder 1, 2, …"
 * (numbered by submission time, per round). When any revealed weighing of the room was anonymous,
 * the participant list withholds stakeholders' names too (it gives their number only), since a
 * name list beside numbered weightings would let readers guess who weighed what. Facilitators,
 * secretaries and observers are always named. E-mail addresses never appear.
 */
import type { RoomRole } from '../roles'
import type { AlternativeStatus, Direction } from './decision'
import type { GroupRule } from './engine'
import type { BallotChoice } from './resolution'

export interface MinutesParticipant {
  /** Null when withheld under the anonymity rule. */
  name: string | null
  role: RoomRole
  roleLabel: string
}

export interface MinutesCriterion {
  id: string
  name: string
  unit: string
  direction: Direction
  /** "lower is better" / "higher is better". */
  directionLabel: string
  lowest: number | null
  highest: number | null
  /** Limits in words with units, e.g. "at most 40 £k"; "none" without limits. */
  limitsText: string
  precision: number | null
}

export interface MinutesAlternative {
  id: string
  name: string
  status: AlternativeStatus
  statusLabel: string
  /** Scores in the criterion order, as numbers with the criterion's unit, e.g. "12.5 £k". */
  scoresText: string[]
  /** For dominated (and weakly efficient) alternatives: the efficient alternative that dominates it. */
  dominatedBy: { id: string, name: string } | null
  /** Names of the criteria on which it is strictly worse than `dominatedBy`. */
  worseOn: string[]
  /** For infeasible alternatives: each broken limit in words with units. */
  brokenLimits: string[]
  /** One sentence saying why it was set aside (empty for efficient alternatives). */
  explanation: string
}

export interface MinutesWeighting {
  /** The stakeholder's name, or "Stakeholder n" in an anonymous round. */
  label: string
  /** Percent per criterion, criterion order. */
  weightsPercent: number[]
  favourites: string[]
}

export interface MinutesGroupStanding {
  rule: GroupRule
  ruleLabel: string
  /** Percent per criterion, criterion order; null when the rule could not be applied. */
  weightsPercent: number[] | null
  /** Mean total-variation distance to the group weighting, percent. */
  dispersionPercent: number | null
  /** Share of stakeholders whose own favourite is a group favourite, percent. */
  agreementPercent: number | null
  favourites: string[]
  note: string | null
}

export interface MinutesRound {
  number: number
  anonymous: boolean
  inputStyle: string
  ledgerVersion: number
  openedAt: string
  closedAt: string | null
  revealedAt: string | null
  weightings: MinutesWeighting[]
  /** Alternative names with how many stakeholders favoured each (ties share a vote). */
  favouredBy: { name: string, count: number }[]
  group: MinutesGroupStanding[]
  /** The draws behind the round's acceptability figures in the weight-space view (roundAcceptabilityDraws). */
  acceptability: { samples: number, seed: number }
}

export interface MinutesVote {
  ledgerVersion: number
  openedAt: string
  closedAt: string | null
  cast: number
  eligible: number
  tally: { name: string, counts: Record<BallotChoice, number> }[]
}

export interface MinutesResolution {
  id: string
  alternativeName: string
  engineStatus: AlternativeStatus | string
  engineStatusLabel: string
  /** Set when the chosen alternative was dominated or infeasible: a plain statement saying so. */
  statusStatement: string | null
  justification: string | null
  rationale: string
  conditions: string
  dissent: string
  recordedBy: string
  recordedAt: string
  frozenAt: string | null
}

export interface MinutesAmendment {
  /** 'amends': this resolution corrects that earlier one; 'amended-by': a later one corrects this. */
  relation: 'amends' | 'amended-by'
  resolutionId: string
  alternativeName: string
  recordedAt: string
  frozenAt: string | null
}

export interface MinutesAuditSummary {
  total: number
  first: string | null
  last: string | null
  byAction: { action: string, count: number }[]
}

export interface MinutesContent {
  room: { id: string, title: string, question: string, status: string }
  /** The meeting's date: when the resolution was recorded, else when the minutes were prepared. */
  date: string
  preparedAt: string
  participants: MinutesParticipant[]
  stakeholderNamesWithheld: boolean
  anonymityNote: string
  ledger: {
    version: number
    hash: string
    createdAt: string
    note: string
    /** The uploaded file this version was read from (kept in the room's attachments); null when typed in. */
    source: { filename: string, size: number, sha256: string } | null
  }
  criteria: MinutesCriterion[]
  alternatives: MinutesAlternative[]
  counts: Record<AlternativeStatus, number>
  /** The front of the first two criteria, drawn in the PDF; null with fewer than two criteria. */
  front: PairFront | null
  rounds: MinutesRound[]
  vote: MinutesVote | null
  resolution: MinutesResolution | null
  amendments: MinutesAmendment[]
  audit: MinutesAuditSummary
  caution: string
}
