import type { Direction } from '../types/decision'
import type { NormalisedTable } from '../types/engine'

/** Unit roundoff of IEEE double precision (round to nearest). */
export const UNIT_ROUNDOFF = 2 ** -53

/**
 * Ideal (best) and nadir (worst) value of each criterion over the rows where `rows[i] === 1`,
 * from a row-major `n` × `p` matrix in criterion units. Null when no row is selected.
 * The nadir is taken over the selected rows only (over the efficient set, it is the usual
 * payoff-free nadir of a finite set). O(n·p).
 */
export function idealAndNadir(
  values: ArrayLike<number>,
  n: number,
  p: number,
  directions: readonly Direction[],
  rows: ArrayLike<number>,
): { best: Float64Array, worst: Float64Array } | null {
  const best = new Float64Array(p)
  const worst = new Float64Array(p)
  let seen = false
  for (let i = 0; i < n; i++) {
    if (rows[i] !== 1) continue
    for (let k = 0; k < p; k++) {
      const x = values[i * p + k]!
      if (!seen) {
        best[k] = x
        worst[k] = x
        continue
      }
      const minimise = directions[k] === 'min'
      if (minimise ? x < best[k]! : x > best[k]!) best[k] = x
      if (minimise ? x > worst[k]! : x < worst[k]!) worst[k] = x
    }
    seen = true
  }
  return seen ? { best, worst } : null
}

/**
 * A criterion value on the 0–1 scale where the ideal is 1 and the nadir 0:
 * (x − worst) / (best − worst), which handles both directions since best < worst when minimising.
 *
 * Not clamped: a value worse than the nadir (only a dominated or infeasible alternative has one)
 * comes out below 0, and one better than the ideal above 1. Clamping would make unequal values
 * look equal, so a strictly worse alternative could seem merely weakly worse and rankings
 * outside the efficient set would tie artificially.
 *
 * When best equals worst the criterion cannot discriminate among efficient alternatives and has
 * no scale: every value at least as good as the ideal maps to 1, anything worse to 0. Weight on
 * such a criterion changes no comparison among efficient alternatives.
 * NaN in gives NaN out.
 */
export function normaliseValue(x: number, best: number, worst: number, direction: Direction): number {
  if (best === worst) {
    if (Number.isNaN(x)) return Number.NaN
    return (direction === 'min' ? x <= best : x >= best) ? 1 : 0
  }
  // Halving first is exact and keeps best − worst finite even for scores near ±Number.MAX_VALUE;
  // + 0 turns the −0 a minimised nadir would give into +0.
  return (x / 2 - worst / 2) / (best / 2 - worst / 2) + 0
}

/**
 * A bound on the absolute error of `normaliseValue(x, best, worst)` relative to exact arithmetic
 * on the decimal inputs: each input may carry a relative rounding error of u when written in
 * binary, and the subtraction, subtraction and division add three more. First-order analysis:
 * |Δv| ≤ u·((|x| + |worst|)/|best − worst| + |v|·((|best| + |worst|)/|best − worst| + 3)),
 * doubled for the second-order terms. Zero when best equals worst (the value is exact).
 */
export function normalisationError(x: number, best: number, worst: number, direction: Direction): number {
  if (best === worst) return 0
  const span = Math.abs(best / 2 - worst / 2) * 2
  const v = Math.abs(normaliseValue(x, best, worst, direction))
  const conditioning = (Math.abs(best) + Math.abs(worst)) / span
  return 2 * UNIT_ROUNDOFF * ((Math.abs(x) + Math.abs(worst)) / span + v * (conditioning + 3))
}

/**
 * Normalises a row-major `n` × `p` matrix (criterion units) against given ideal and nadir,
 * giving the table the favourites, support test and stability analysis work on.
 * `valueError[k]` bounds the rounding error of every value whose raw score lies between the
 * ideal and the nadir (6u(κ + 1) with κ = (|best| + |worst|)/|best − worst|, the worst case of
 * `normalisationError` over that range). n = 0 gives an empty table. O(n·p).
 */
export function normaliseTable(
  criterionIds: readonly string[],
  directions: readonly Direction[],
  alternativeIds: readonly string[],
  raw: ArrayLike<number>,
  best: ArrayLike<number>,
  worst: ArrayLike<number>,
): NormalisedTable {
  const n = alternativeIds.length
  const p = criterionIds.length
  if (directions.length !== p || best.length !== p || worst.length !== p || raw.length !== n * p) {
    throw new RangeError(`normaliseTable: shapes disagree (${n} alternatives × ${p} criteria, ${raw.length} values)`)
  }
  const values = new Float64Array(n * p)
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < p; k++) {
      values[i * p + k] = normaliseValue(raw[i * p + k]!, best[k]!, worst[k]!, directions[k]!)
    }
  }
  const valueError = new Float64Array(p)
  for (let k = 0; k < p; k++) {
    const b = best[k]!
    const w = worst[k]!
    if (b === w) continue
    const span = Math.abs(b / 2 - w / 2) * 2
    valueError[k] = 6 * UNIT_ROUNDOFF * ((Math.abs(b) + Math.abs(w)) / span + 1)
  }
  return {
    n,
    p,
    criterionIds: [...criterionIds],
    directions: [...directions],
    alternativeIds: [...alternativeIds],
    values,
    best: Float64Array.from(best),
    worst: Float64Array.from(worst),
    valueError,
  }
}

/**
 * Any alternative's scores (keyed by criterion id) on the table's 0–1 scale, in criterion order,
 * e.g. to draw a dominated alternative beside the efficient ones. Unclamped (see
 * `normaliseValue`). Throws a RangeError when a criterion's score is missing.
 */
export function normaliseScores(table: NormalisedTable, scores: Readonly<Record<string, number>>): number[] {
  return table.criterionIds.map((id, k) => {
    if (!Object.hasOwn(scores, id)) throw new RangeError(`normaliseScores: no score for criterion "${id}"`)
    return normaliseValue(scores[id]!, table.best[k]!, table.worst[k]!, table.directions[k]!)
  })
}
