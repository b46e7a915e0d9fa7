import type { GroupRule, GroupStanding, LedgerAnalysis, NormalisedTable } from '../types/engine'
import { normaliseWeights, tableOf, weightedSumFavourite } from './scalarise'

function checkedStakeholders(stakeholders: readonly ArrayLike<number>[], p: number): Float64Array[] {
  if (stakeholders.length === 0) throw new RangeError('No stakeholder has weighted the criteria yet.')
  return stakeholders.map((weights, s) => {
    try {
      return normaliseWeights(weights, p)
    }
    catch (error) {
      throw new RangeError(`Stakeholder ${s + 1}: ${(error as Error).message}`, { cause: error })
    }
  })
}

function rescaled(combined: Float64Array, rule: GroupRule): Float64Array {
  const total = combined.reduce((a, b) => a + b, 0)
  if (!(total > 0)) {
    throw new RangeError(
      `The ${rule} of the stakeholders' weights is zero on every criterion (no criterion has `
      + `${rule === 'median' ? 'a positive weight from half of the stakeholders' : 'a positive weight from every stakeholder'}); `
      + 'use the mean instead.',
    )
  }
  return combined.map(x => x / total)
}

/**
 * Arithmetic mean of the stakeholders' weights, each first normalised to sum 1, so everyone
 * counts equally whatever scale they used. The default rule: with weighted sums it keeps
 * unanimity, since w̄·(a − b) is the mean of the w_s·(a − b), so an alternative every
 * stakeholder ranks first (ties included) is a group winner too. O(s·p).
 * Throws a RangeError when there is no stakeholder or a weight vector is bad.
 */
export function meanWeights(stakeholders: readonly ArrayLike<number>[], p: number): Float64Array {
  const all = checkedStakeholders(stakeholders, p)
  const mean = new Float64Array(p)
  for (const w of all) for (let k = 0; k < p; k++) mean[k] = mean[k]! + w[k]! / all.length
  return rescaled(mean, 'mean')
}

/**
 * Per-criterion geometric mean of the normalised weights, rescaled to sum 1. It respects the
 * ratios stakeholders give (the usual aggregate of judgements in ratio scales) but can break
 * unanimity: the group vector can leave the convex cone of weightings under which every
 * stakeholder's shared favourite wins. One zero weight makes the criterion's mean zero; a
 * RangeError when that happens on every criterion. O(s·p).
 */
export function geometricMeanWeights(stakeholders: readonly ArrayLike<number>[], p: number): Float64Array {
  const all = checkedStakeholders(stakeholders, p)
  const geometric = new Float64Array(p)
  for (let k = 0; k < p; k++) {
    let logSum = 0
    for (const w of all) logSum += Math.log(w[k]!)
    geometric[k] = Math.exp(logSum / all.length)
  }
  return rescaled(geometric, 'geometric-mean')
}

/**
 * Per-criterion median of the normalised weights (mean of the middle two for an even count),
 * rescaled to sum 1. Robust to one stakeholder's extreme weights, but can break unanimity like
 * the geometric mean: per-criterion medians need not lie in the cone where the shared favourite
 * wins (medians of several coordinates are not a convex combination of the inputs).
 * A RangeError when every median is zero. O(s·p·log s).
 */
export function medianWeights(stakeholders: readonly ArrayLike<number>[], p: number): Float64Array {
  const all = checkedStakeholders(stakeholders, p)
  const median = new Float64Array(p)
  for (let k = 0; k < p; k++) {
    const column = Float64Array.from(all, w => w[k]!).sort()
    const mid = column.length >> 1
    median[k] = column.length % 2 === 1 ? column[mid]! : (column[mid - 1]! + column[mid]!) / 2
  }
  return rescaled(median, 'median')
}

/** Group weights by the named rule (see `meanWeights`, `geometricMeanWeights`, `medianWeights`). */
export function groupWeights(stakeholders: readonly ArrayLike<number>[], p: number, rule: GroupRule = 'mean'): Float64Array {
  switch (rule) {
    case 'mean': return meanWeights(stakeholders, p)
    case 'geometric-mean': return geometricMeanWeights(stakeholders, p)
    case 'median': return medianWeights(stakeholders, p)
  }
}

/**
 * Mean total-variation distance ½·Σ_k |w_sk − g_k| from each stakeholder's normalised weights to
 * the group's. 0 when everyone agrees with the group, at most 1 (disjoint supports). O(s·p).
 * Throws a RangeError on bad weights or no stakeholder.
 */
export function weightDispersion(stakeholders: readonly ArrayLike<number>[], group: ArrayLike<number>): number {
  const p = group.length
  const g = normaliseWeights(group, p)
  const all = checkedStakeholders(stakeholders, p)
  let total = 0
  for (const w of all) {
    let distance = 0
    for (let k = 0; k < p; k++) distance += Math.abs(w[k]! - g[k]!)
    total += distance / 2
  }
  return total / all.length
}

/**
 * Where the group stands under a rule: group weights, their dispersion, the group's weighted-sum
 * favourite among the table's (efficient) alternatives, each stakeholder's winners, and the
 * agreement: the share of stakeholders with at least one winner in common with the group
 * (so with ties, agreeing on one of the tied alternatives counts). An empty table gives no
 * winners and agreement 0. O(s·n·p).
 */
export function groupStanding(
  source: LedgerAnalysis | NormalisedTable,
  stakeholders: readonly ArrayLike<number>[],
  rule: GroupRule = 'mean',
): GroupStanding {
  const table = tableOf(source)
  const weights = groupWeights(stakeholders, table.p, rule)
  const favourite = weightedSumFavourite(table, weights)
  const groupWinners = new Set(favourite.winners)
  const stakeholderWinners = stakeholders.map(w => weightedSumFavourite(table, w).winners)
  const agreeing = stakeholderWinners.filter(winners => winners.some(id => groupWinners.has(id))).length
  return {
    rule,
    weights: Array.from(weights),
    dispersion: weightDispersion(stakeholders, weights),
    agreement: agreeing / stakeholders.length,
    favourite,
    stakeholderWinners,
  }
}
