/**
 * Types of the decision engine's analysis layer (shared/utils). Plain data, so the server,
 * the phones and the tests all read the same shapes.
 */
import type { AlternativeStatus, Criterion, Direction } from './decision'

/** Every way a ledger (criteria + alternatives) can be unfit for analysis. */
export const LEDGER_ERROR_CODES = [
  'no-criteria',
  'criterion-id-duplicate',
  'criterion-name-duplicate',
  'criterion-name-empty',
  'criterion-direction-invalid',
  'criterion-limit-invalid',
  'criterion-limits-reversed',
  'alternative-id-duplicate',
  'alternative-name-duplicate',
  'alternative-name-empty',
  'score-missing',
  'score-not-a-number',
  'score-infinite',
  'score-unknown-criterion',
] as const
export type LedgerErrorCode = (typeof LEDGER_ERROR_CODES)[number]

type CriterionErrorCode = Extract<LedgerErrorCode, `criterion-${string}`>
type AlternativeErrorCode = Extract<LedgerErrorCode, `alternative-${string}`>
type ScoreErrorCode = Extract<LedgerErrorCode, `score-${string}`>

/** The ledger has no criterion at all. */
export interface LedgerWideError {
  code: 'no-criteria'
  message: string
}

/** A fault in one criterion. The index tells rows apart when ids are duplicated. */
export interface CriterionError {
  code: CriterionErrorCode
  criterionIndex: number
  criterionId: string
  criterionName: string
  message: string
}

/** A fault in one alternative's own fields. */
export interface AlternativeError {
  code: AlternativeErrorCode
  alternativeIndex: number
  alternativeId: string
  alternativeName: string
  message: string
}

/**
 * A fault in one score. For `score-unknown-criterion`, `criterionId` is the key found in the
 * scores and `criterionName` is null, since no criterion carries that id.
 */
export interface ScoreError {
  code: ScoreErrorCode
  alternativeIndex: number
  alternativeId: string
  alternativeName: string
  criterionId: string
  criterionName: string | null
  message: string
}

export type LedgerError = LedgerWideError | CriterionError | AlternativeError | ScoreError

export type LimitKind = 'lowest' | 'highest'

/** One hard limit an alternative breaks, in the criterion's own unit. */
export interface BrokenLimit {
  criterionId: string
  limit: LimitKind
  limitValue: number
  value: number
}

/** The verdict on one alternative, in the order the ledger lists them. */
export interface AlternativeVerdict {
  id: string
  name: string
  status: AlternativeStatus
  /** Limits it breaks; empty unless status is 'infeasible'. */
  brokenLimits: BrokenLimit[]
  /** An efficient alternative that dominates it ('dominated' and 'weakly-efficient' only), else null. */
  dominatedBy: string | null
  /** Criterion ids on which it is strictly worse than `dominatedBy`; empty when not dominated. */
  worseOn: string[]
  /** Ids of other alternatives with the very same scores (never dominated by one another). */
  tiesWith: string[]
  /** Efficient only: whether some weighted sum makes it a winner (ties count). Null otherwise, or when not computed. */
  supported: boolean | null
  /** Efficient and supported only: a weighting (criterion order, sums to 1) under which it wins. */
  supportWeights: number[] | null
}

/**
 * Criterion values rescaled to [0, 1] over the efficient set, 1 = ideal (best), 0 = nadir (worst).
 * Rows are alternatives (row-major, `n` × `p`), columns follow `criterionIds`.
 */
export interface NormalisedTable {
  n: number
  p: number
  criterionIds: readonly string[]
  directions: readonly Direction[]
  alternativeIds: readonly string[]
  values: Float64Array
  /** Ideal value of each criterion, in its own unit. */
  best: Float64Array
  /** Nadir value of each criterion over the efficient set, in its own unit. */
  worst: Float64Array
  /**
   * Per criterion, a bound on the absolute error of a normalised value caused by rounding the
   * inputs to binary and by the normalising arithmetic. Used to tell ties from wins.
   */
  valueError: Float64Array
}

/** Result of `analyseLedger`. */
export interface LedgerAnalysis {
  criteria: readonly Criterion[]
  alternatives: AlternativeVerdict[]
  counts: Record<AlternativeStatus, number>
  efficientIds: string[]
  /** Best value per criterion id over the efficient set; null when nothing is efficient. */
  ideal: Record<string, number> | null
  /** Worst value per criterion id over the efficient set; null when nothing is efficient. */
  nadir: Record<string, number> | null
  /** The efficient alternatives, normalised; the candidates every favourite is drawn from. */
  normalised: NormalisedTable
}

/** Winners of a scalarised choice. */
export interface Favourite {
  /** Ids of the best alternatives, in table order; more than one means a tie. Empty for an empty table. */
  winners: string[]
  /** Ids of the next tier (several when they tie); empty when every alternative is a winner. */
  runnersUp: string[]
  /** Score of every table row, in table order (for a weighted sum: higher is better). */
  scores: number[]
  /** The weights used, normalised to sum 1, in criterion order. */
  weights: number[]
}

/** Result of the Tchebycheff / achievement choice: lower achievement is better. */
export interface ReferencePointFavourite extends Favourite {
  /** Unweighted sum of shortfalls from the reference, used to break ties in `scores`. */
  tieBreakScores: number[]
  /** The reference point used, normalised (1 = ideal). */
  reference: number[]
}

/** Verdict of the support test for one efficient alternative. */
export interface SupportVerdict {
  supported: boolean
  /**
   * Best worst-case lead t* = max over weightings of min over rivals b of w·(a − b), in
   * normalised units; ≥ 0 means supported. With no distinct rival, 1 by convention.
   */
  margin: number
  /** A weighting attaining the margin (criterion order, sums to 1). */
  weights: number[]
}

export const GROUP_RULES = ['mean', 'geometric-mean', 'median'] as const
/** How stakeholders' weights are combined into the group's. */
export type GroupRule = (typeof GROUP_RULES)[number]

/** Where the group stands for one rule. */
export interface GroupStanding {
  rule: GroupRule
  /** The group weights, criterion order, sum 1. */
  weights: number[]
  /** Mean total-variation distance from each stakeholder's weights to the group's, in [0, 1]. */
  dispersion: number
  /** Share of stakeholders whose weighted-sum favourite is also a group favourite, in [0, 1]. */
  agreement: number
  favourite: Favourite
  /** Each stakeholder's weighted-sum winners, in input order. */
  stakeholderWinners: string[][]
}

/** How far one criterion's weight can move before the favourite changes. */
export interface WeightInterval {
  criterionId: string
  /** The current (normalised) weight. */
  weight: number
  /** Lowest weight keeping the favourite a winner (others rescaled in proportion). */
  lowest: number
  /** Highest such weight. */
  highest: number
  /** Who wins just below `lowest`; null when the favourite holds down to 0. */
  takenOverBelow: string | null
  /** Who wins just above `highest`; null when the favourite holds up to 1. */
  takenOverAbove: string | null
}

export interface WeightStability {
  favouriteId: string
  weights: number[]
  intervals: WeightInterval[]
}
