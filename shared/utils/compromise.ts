import type { LedgerAnalysis, NormalisedTable } from '../types/engine'
import { normaliseWeights, tableOf, weightedSumFavourite, weightedSumScores } from './scalarise'

/*
 * A compromise among stakeholders who weigh the criteria differently. Stakeholder s, with
 * weights w_s (normalised to sum 1), scores alternative i as S_s(i) = Σ_k w_sk·v_ik on the
 * normalised table (1 = ideal, 0 = nadir, so scores are in [0, 1] for efficient rows). Their
 * shortfall on i is what they give up against their own favourite:
 *   d_s(i) = max_j S_s(j) − S_s(i) ≥ 0,
 * in "share of the criterion ranges" units (0.1 = a tenth of the way from best to worst on
 * every criterion, under their weights). The compromise candidate minimises the largest
 * shortfall max_s d_s(i) (minimax regret over the stakeholders' own weightings; Savage's
 * criterion applied to stakeholders instead of states of the world).
 *
 * Ties, in this order: (1) largest shortfalls equal within the rounding bounds of the scores
 * (`weightedSumScores`); (2) the lexicographic minimax refinement: compare the second largest
 * shortfall, then the third, …; (3) table order. Alternatives still level after (2) are listed
 * in `tiedWith`. Shortfalls within rounding of 0 are reported as 0.
 *
 * Candidates to drop: alternatives that are a weighted-sum winner (ties count, as in
 * `weightedSumFavourite`) for no submitted weighting.
 */

export interface CompromiseStanding {
  alternativeId: string
  /** Shortfall d_s(i) of each stakeholder, in input order (0 for those who favour it). */
  shortfalls: number[]
  /** max_s d_s(i). */
  maxShortfall: number
  /** Stakeholders (input indices) whose shortfall is the largest (within rounding). */
  worstFor: number[]
  /** Their ids, when ids were given; else "stakeholder <index + 1>". */
  worstForIds: string[]
  /** Mean shortfall over the stakeholders. */
  meanShortfall: number
  /** Stakeholders (input indices) whose weighted-sum favourite it is (ties count). */
  favouredBy: number[]
}

export interface Compromise {
  /** The compromise candidate's standing; null for an empty table. */
  compromise: CompromiseStanding | null
  /** Other alternatives level with it after the tie-breaks (1) and (2); table order. */
  tiedWith: string[]
  /** Every alternative's standing, table order (for an analysis: the efficient ones). */
  standings: CompromiseStanding[]
  /** Each stakeholder's best score max_j S_s(j), input order. */
  stakeholderBest: number[]
  /** Each stakeholder's weighted-sum winners, input order. */
  stakeholderFavourites: string[][]
  /** Alternatives no submitted weighting favours (candidates to drop), table order. */
  unfavouredIds: string[]
}

/**
 * The compromise candidate among the table's alternatives (for an analysis: the efficient
 * ones) for the stakeholders' weightings (input order, any positive scale each), with every
 * alternative's standing and the alternatives nobody favours; see the notes at the top of this
 * file. `stakeholderIds` (same length) names stakeholders in `worstForIds`. RangeError when
 * there is no stakeholder, a weighting is bad (naming the stakeholder), or the ids do not
 * match in number. An empty table gives no compromise. O(s·n·p + n·s·log s).
 */
export function compromiseCandidate(
  source: LedgerAnalysis | NormalisedTable,
  stakeholders: readonly ArrayLike<number>[],
  options: { stakeholderIds?: readonly string[] } = {},
): Compromise {
  const table = tableOf(source)
  const { n, p } = table
  if (stakeholders.length === 0) throw new RangeError('No stakeholder has weighted the criteria yet.')
  const names = options.stakeholderIds
  if (names !== undefined && names.length !== stakeholders.length) {
    throw new RangeError(`Got ${names.length} stakeholder ids for ${stakeholders.length} weightings.`)
  }
  const s = stakeholders.length
  const scored = stakeholders.map((weights, index) => {
    try {
      normaliseWeights(weights, p)
      return weightedSumScores(table, weights)
    }
    catch (error) {
      throw new RangeError(`Stakeholder ${index + 1}: ${(error as Error).message}`, { cause: error })
    }
  })
  const favourites = stakeholders.map(weights => weightedSumFavourite(table, weights).winners)
  const stakeholderBest = scored.map(({ scores }) => (n === 0 ? 0 : Math.max(...scores)))

  // One tolerance for every comparison of shortfalls: each carries two score bounds, so 4× the largest.
  let tolerance = 0
  for (const { errorBounds } of scored) for (const b of errorBounds) tolerance = Math.max(tolerance, 4 * b)

  const standings: CompromiseStanding[] = []
  const sortedShortfalls: number[][] = []
  for (let i = 0; i < n; i++) {
    const id = table.alternativeIds[i]!
    const shortfalls = scored.map(({ scores }, t) => {
      const d = stakeholderBest[t]! - scores[i]!
      return d <= tolerance ? 0 : d
    })
    const maxShortfall = Math.max(...shortfalls)
    const worstFor: number[] = []
    shortfalls.forEach((d, t) => {
      if (maxShortfall - d <= tolerance) worstFor.push(t)
    })
    const favouredBy: number[] = []
    favourites.forEach((winners, t) => {
      if (winners.includes(id)) favouredBy.push(t)
    })
    standings.push({
      alternativeId: id,
      shortfalls,
      maxShortfall,
      worstFor,
      worstForIds: worstFor.map(t => names?.[t] ?? `stakeholder ${t + 1}`),
      meanShortfall: shortfalls.reduce((a, b) => a + b, 0) / s,
      favouredBy,
    })
    sortedShortfalls.push([...shortfalls].sort((a, b) => b - a))
  }

  /** Negative when i is the better compromise: leximax order on the sorted shortfalls. */
  const compare = (i: number, j: number): number => {
    const a = sortedShortfalls[i]!
    const b = sortedShortfalls[j]!
    for (let t = 0; t < s; t++) {
      if (Math.abs(a[t]! - b[t]!) > tolerance) return a[t]! - b[t]!
    }
    return 0
  }
  let best = -1
  for (let i = 0; i < n; i++) if (best < 0 || compare(i, best) < 0) best = i
  const tiedWith: string[] = []
  if (best >= 0) {
    for (let i = 0; i < n; i++) if (i !== best && compare(i, best) === 0) tiedWith.push(table.alternativeIds[i]!)
  }

  const favoured = new Set(favourites.flat())
  return {
    compromise: best >= 0 ? standings[best]! : null,
    tiedWith,
    standings,
    stakeholderBest,
    stakeholderFavourites: favourites,
    unfavouredIds: table.alternativeIds.filter(id => !favoured.has(id)),
  }
}
