import type { Favourite, LedgerAnalysis, NormalisedTable, ReferencePointFavourite } from '../types/engine'
import { normalisationError, normaliseValue, UNIT_ROUNDOFF } from './normalise'

/*
 * Ties. Scores are sums of products of doubles, and the inputs themselves are usually decimals
 * (0.2, 0.15) that binary cannot hold exactly, so two alternatives that tie in exact decimal
 * arithmetic can differ in the last bits. Each score therefore carries a forward error bound
 * after Higham, "Accuracy and Stability of Numerical Algorithms" (2nd ed., SIAM 2002), §3.1:
 * a dot product of length m is within γ_m·Σ|w_k·x_k| of the exact one, γ_m = m·u/(1 − m·u).
 * Two scores tie when they differ by no more than the sum of their bounds. So an exact tie is
 * never reported as a win, and scores that double precision cannot separate count as a tie.
 */

/** γ_m of Higham (2002): the relative error bound of m successive roundings. */
export function gamma(m: number): number {
  return (m * UNIT_ROUNDOFF) / (1 - m * UNIT_ROUNDOFF)
}

/** Accepts either an analysis (uses its efficient table) or a table. */
export function tableOf(source: LedgerAnalysis | NormalisedTable): NormalisedTable {
  return 'normalised' in source ? source.normalised : source
}

/**
 * Checks a weight vector and rescales it to sum 1. Weights must number `p`, be finite and ≥ 0,
 * and not all be zero; otherwise throws a RangeError saying which weight is wrong.
 * −0 counts as 0. Dividing by the largest weight first keeps the sum finite for huge weights.
 */
export function normaliseWeights(weights: ArrayLike<number>, p: number): Float64Array {
  if (weights.length !== p) {
    throw new RangeError(`Expected ${p} weight${p === 1 ? '' : 's'}, one per criterion, but got ${weights.length}.`)
  }
  let largest = 0
  for (let k = 0; k < p; k++) {
    const w = weights[k]
    if (typeof w !== 'number' || Number.isNaN(w)) throw new RangeError(`Weight ${k + 1} is not a number.`)
    if (!Number.isFinite(w)) throw new RangeError(`Weight ${k + 1} is infinite.`)
    if (w < 0) throw new RangeError(`Weight ${k + 1} is negative (${w}); weights must be zero or more.`)
    if (w > largest) largest = w
  }
  if (largest === 0) throw new RangeError('All weights are zero; at least one criterion needs a positive weight.')
  const scaled = new Float64Array(p)
  let sum = 0
  for (let k = 0; k < p; k++) {
    // + 0 turns −0 into +0, so a zero weight reads as zero everywhere downstream.
    scaled[k] = weights[k]! / largest + 0
    sum += scaled[k]!
  }
  for (let k = 0; k < p; k++) scaled[k] = scaled[k]! / sum
  return scaled
}

/**
 * Weights keyed by criterion id, as a vector in the given criterion order. Throws a RangeError
 * naming a criterion without a weight or a key that names no criterion. Values are not checked
 * here (see `normaliseWeights`).
 */
export function weightVector(criterionIds: readonly string[], byId: Readonly<Record<string, number>>): number[] {
  const known = new Set(criterionIds)
  for (const key of Object.keys(byId)) {
    if (!known.has(key)) throw new RangeError(`A weight is given for "${key}", which is not a criterion.`)
  }
  return criterionIds.map((id) => {
    if (!Object.hasOwn(byId, id)) throw new RangeError(`No weight is given for criterion "${id}".`)
    return byId[id]!
  })
}

/**
 * Indices among `candidates` whose score ties with the best one (see the note on ties above).
 * `higherIsBetter` picks the direction. Ties are measured against the single best score, so
 * the tier is well defined even though "within bounds" is not transitive. Empty in, empty out.
 */
function bestTier(
  candidates: readonly number[],
  score: ArrayLike<number>,
  bound: ArrayLike<number>,
  higherIsBetter: boolean,
): number[] {
  if (candidates.length === 0) return []
  let top = candidates[0]!
  for (const i of candidates) {
    if (higherIsBetter ? score[i]! > score[top]! : score[i]! < score[top]!) top = i
  }
  return candidates.filter(i => Math.abs(score[i]! - score[top]!) <= bound[i]! + bound[top]!)
}

interface ScoredKey {
  score: ArrayLike<number>
  bound: ArrayLike<number>
  higherIsBetter: boolean
}

/** Winners and runners-up under a lexicographic order of one or more scored keys. */
function winnersAndRunnersUp(n: number, keys: readonly ScoredKey[]): { winners: number[], runnersUp: number[] } {
  const tier = (pool: number[]) =>
    keys.reduce((current, key) => bestTier(current, key.score, key.bound, key.higherIsBetter), pool)
  const everyone = Array.from({ length: n }, (_, i) => i)
  const winners = tier(everyone)
  const chosen = new Set(winners)
  const runnersUp = tier(everyone.filter(i => !chosen.has(i)))
  return { winners, runnersUp }
}

/** Weighted-sum scores of a table with their rounding bounds; weights already normalised. */
function sumsWithBounds(table: NormalisedTable, w: Float64Array): { scores: Float64Array, bounds: Float64Array } {
  const { n, p, values, valueError } = table
  const scores = new Float64Array(n)
  const bounds = new Float64Array(n)
  // Weights carry about p + 3 roundings of their own (input, scaling, sum, division).
  const g = gamma(2 * p + 4)
  let inherited = 0
  for (let k = 0; k < p; k++) inherited += w[k]! * valueError[k]!
  for (let i = 0; i < n; i++) {
    let s = 0
    let magnitude = 0
    for (let k = 0; k < p; k++) {
      const term = w[k]! * values[i * p + k]!
      s += term
      magnitude += Math.abs(term)
    }
    scores[i] = s
    bounds[i] = g * magnitude + inherited
  }
  return { scores, bounds }
}

/**
 * Weighted sums Σ_k w_k·v_ik of every table row (normalised values, so higher is better), with
 * the weights normalised to sum 1, and each score's rounding bound (two scores tie when they
 * differ by no more than the sum of their bounds). Throws a RangeError for bad weights. O(n·p).
 */
export function weightedSumScores(
  source: LedgerAnalysis | NormalisedTable,
  weights: ArrayLike<number>,
): { scores: Float64Array, errorBounds: Float64Array, weights: Float64Array } {
  const table = tableOf(source)
  const w = normaliseWeights(weights, table.p)
  const { scores, bounds } = sumsWithBounds(table, w)
  return { scores, errorBounds: bounds, weights: w }
}

/**
 * The weighted-sum favourite among the table's alternatives (for an analysis: the efficient ones)
 * on normalised values, 1 = ideal: winners (several on a tie), runners-up and every score.
 * Weights are checked and normalised to sum 1 (RangeError on wrong length, NaN, ±Infinity,
 * a negative or all zero). Ties as described at the top of this file. An empty table gives no
 * winner. O(n·p).
 */
export function weightedSumFavourite(source: LedgerAnalysis | NormalisedTable, weights: ArrayLike<number>): Favourite {
  const table = tableOf(source)
  const w = normaliseWeights(weights, table.p)
  const { scores, bounds } = sumsWithBounds(table, w)
  const { winners, runnersUp } = winnersAndRunnersUp(table.n, [{ score: scores, bound: bounds, higherIsBetter: true }])
  return {
    winners: winners.map(i => table.alternativeIds[i]!),
    runnersUp: runnersUp.map(i => table.alternativeIds[i]!),
    scores: Array.from(scores),
    weights: Array.from(w),
  }
}

/**
 * The plain weighted sum Σ_k w_k·x_ik on raw scores (all criteria taken as benefits, weights used
 * as given, not rescaled), as textbook examples compute it. Returns every score and the indices
 * of the winners and runners-up; ties use the bound γ_(p+2)·Σ|w_k·x_ik| per score, which covers
 * rounding decimal weights and scores to binary, each product and the summation, so sums that are
 * equal in exact decimal arithmetic always tie. Throws a RangeError on bad weights or a row of
 * the wrong length or with a non-finite score. O(n·p).
 */
export function rawWeightedSumRanking(
  rows: readonly (readonly number[])[],
  weights: readonly number[],
): { scores: number[], winners: number[], runnersUp: number[] } {
  const p = weights.length
  normaliseWeights(weights, p)
  const scores = new Float64Array(rows.length)
  const bounds = new Float64Array(rows.length)
  const g = gamma(p + 2)
  rows.forEach((row, i) => {
    if (row.length !== p) throw new RangeError(`Row ${i + 1} has ${row.length} scores but there are ${p} weights.`)
    let s = 0
    let magnitude = 0
    for (let k = 0; k < p; k++) {
      const x = row[k]!
      if (!Number.isFinite(x)) throw new RangeError(`Row ${i + 1}, score ${k + 1} is not a finite number.`)
      const term = weights[k]! * x
      s += term
      magnitude += Math.abs(term)
    }
    scores[i] = s
    bounds[i] = g * magnitude
  })
  const { winners, runnersUp } = winnersAndRunnersUp(rows.length, [{ score: scores, bound: bounds, higherIsBetter: true }])
  return { scores: Array.from(scores), winners, runnersUp }
}

/**
 * The favourite by distance to a reference point, on normalised values (1 = ideal):
 * minimises the weighted Tchebycheff shortfall max_k w_k·(r_k − v_ik) and breaks ties on it by
 * the unweighted total shortfall Σ_k (r_k − v_ik) (lexicographic, as in Steuer & Choo, Math.
 * Programming 26, 1983). With no aspiration, r is the ideal point (r_k = 1). With an aspiration
 * point (criterion units, criterion order) this is Wierzbicki's achievement scalarising function
 * (Wierzbicki, "The use of reference objectives in multiobjective optimization", 1980): it works
 * whether the aspiration is attainable or not (shortfalls then go negative).
 *
 * Why the tie-break: a zero weight, or a tie in the max, can leave an alternative and one that
 * dominates it level; the dominating one has a strictly smaller total shortfall, so a merely
 * weakly efficient row never wins alone. Unlike a weighted sum, this can pick efficient
 * alternatives that no weighting of a sum picks (unsupported ones on a non-convex front).
 *
 * A criterion with a single efficient value has no scale; its reference coordinate is set to
 * 1 so it contributes no shortfall. Weights as in `weightedSumFavourite` (RangeError when bad);
 * a wrong-length or non-finite aspiration is a RangeError too. `scores` are the Tchebycheff
 * values (lower is better). O(n·p).
 */
export function referencePointFavourite(
  source: LedgerAnalysis | NormalisedTable,
  weights: ArrayLike<number>,
  aspiration?: ArrayLike<number>,
): ReferencePointFavourite {
  const table = tableOf(source)
  const { n, p, values, valueError, best, worst, directions } = table
  const w = normaliseWeights(weights, p)
  const reference = new Float64Array(p).fill(1)
  const referenceError = new Float64Array(p)
  if (aspiration !== undefined) {
    if (aspiration.length !== p) {
      throw new RangeError(`Expected an aspiration level for each of the ${p} criteria, but got ${aspiration.length}.`)
    }
    for (let k = 0; k < p; k++) {
      const a = aspiration[k]
      if (typeof a !== 'number' || !Number.isFinite(a)) {
        throw new RangeError(`Aspiration level ${k + 1} is not a finite number.`)
      }
      if (best[k] === worst[k]) continue
      reference[k] = normaliseValue(a, best[k]!, worst[k]!, directions[k]!)
      referenceError[k] = normalisationError(a, best[k]!, worst[k]!, directions[k]!)
    }
  }
  const primary = new Float64Array(n)
  const primaryBound = new Float64Array(n)
  const secondary = new Float64Array(n)
  const secondaryBound = new Float64Array(n)
  const gTerm = gamma(p + 5)
  const gSum = gamma(p + 1)
  for (let i = 0; i < n; i++) {
    let worstTerm = -Infinity
    let worstTermBound = 0
    let total = 0
    let totalMagnitude = 0
    let inherited = 0
    for (let k = 0; k < p; k++) {
      const shortfall = reference[k]! - values[i * p + k]!
      const term = w[k]! * shortfall
      // |max a − max b| ≤ max |a − b|, so the bound of the max is the largest term bound.
      const termBound = w[k]! * (valueError[k]! + referenceError[k]!) + gTerm * Math.abs(term)
      if (term > worstTerm) worstTerm = term
      if (termBound > worstTermBound) worstTermBound = termBound
      total += shortfall
      totalMagnitude += Math.abs(shortfall)
      inherited += valueError[k]! + referenceError[k]!
    }
    primary[i] = worstTerm
    primaryBound[i] = worstTermBound
    secondary[i] = total
    secondaryBound[i] = gSum * totalMagnitude + inherited
  }
  const { winners, runnersUp } = winnersAndRunnersUp(n, [
    { score: primary, bound: primaryBound, higherIsBetter: false },
    { score: secondary, bound: secondaryBound, higherIsBetter: false },
  ])
  return {
    winners: winners.map(i => table.alternativeIds[i]!),
    runnersUp: runnersUp.map(i => table.alternativeIds[i]!),
    scores: Array.from(primary),
    tieBreakScores: Array.from(secondary),
    weights: Array.from(w),
    reference: Array.from(reference),
  }
}
