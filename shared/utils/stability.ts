import type { LedgerAnalysis, NormalisedTable, WeightInterval, WeightStability } from '../types/engine'
import { gamma, tableOf, weightedSumFavourite, weightedSumScores } from './scalarise'

interface Crossing {
  at: number
  /** Rounding bound on `at`. */
  bound: number
  rival: number
  /** Slope of S_a − S_rival along the path. */
  slope: number
}

/**
 * The crossing nearest the current weight on one side. Crossings that coincide within their
 * rounding bounds count as one point, and the rival that leads most just beyond it is named
 * (largest slope below, smallest above); then table order.
 */
function takeover(crossings: readonly Crossing[], below: boolean): Crossing | null {
  if (crossings.length === 0) return null
  let nearest = crossings[0]!
  for (const c of crossings) if (below ? c.at > nearest.at : c.at < nearest.at) nearest = c
  let chosen = nearest
  for (const c of crossings) {
    if (Math.abs(c.at - nearest.at) > c.bound + nearest.bound) continue
    if (below ? c.slope > chosen.slope : c.slope < chosen.slope) chosen = c
  }
  return { ...chosen, at: nearest.at }
}

/**
 * How stable a weighted-sum favourite is: for each criterion k, the interval [lowest, highest]
 * ⊆ [0, 1] over which w_k can move, the other weights rescaled to keep their ratios
 * (w_j(s) = w_j·(1 − s)/(1 − w_k)), while `favouriteId` stays a winner (ties count), and who
 * wins just beyond each end (null when the favourite holds to 0 or to 1).
 *
 * Exact, not sampled: along that path every score is linear in s,
 *   S_i(s) = s·v_ik + (1 − s)·R_i,  R_i = Σ_{j≠k} w_j·v_ij / Σ_{j≠k} w_j,
 * so a rival b overtakes at most once: on the side where S_a − S_b is negative at the end of
 * [0, 1] (beyond the rounding bounds of `weightedSumFavourite`; a tie at an end is no takeover),
 * at s = s₀ − (S_a − S_b)(s₀)/slope_b with slope_b = (v_ak − v_bk) − (R_a − R_b). The interval
 * ends at the nearest crossing on each side. A rival tied with the favourite at the current
 * weights ends the interval at the current weight on the side where it pulls ahead. When
 * rivals cross at the same point (within rounding), the one that leads beyond it is named. When
 * w_k = 1 the ratios of the others are undefined, and they share 1 − s equally. With a single
 * criterion the favourite cannot change (every positive weight normalises to 1): [0, 1].
 *
 * `favouriteId` defaults to the first weighted-sum winner; one that is not a winner is a
 * RangeError, as are bad weights and an empty table. O(n·p²).
 */
export function weightStability(
  source: LedgerAnalysis | NormalisedTable,
  weights: ArrayLike<number>,
  favouriteId?: string,
): WeightStability {
  const table = tableOf(source)
  const { n, p, values, valueError } = table
  if (n === 0) throw new RangeError('There is no alternative to hold a favourite position.')
  const { scores, errorBounds, weights: w } = weightedSumScores(table, weights)
  const chosen = favouriteId ?? weightedSumFavourite(table, weights).winners[0]!
  const a = table.alternativeIds.indexOf(chosen)
  if (a < 0) throw new RangeError(`"${chosen}" is not among the alternatives of this table.`)
  const tiedNow = (b: number) => Math.abs(scores[a]! - scores[b]!) <= errorBounds[a]! + errorBounds[b]!
  for (let b = 0; b < n; b++) {
    if (scores[b]! > scores[a]! && !tiedNow(b)) {
      throw new RangeError(`"${chosen}" is not a weighted-sum winner for these weights.`)
    }
  }

  const gRest = gamma(2 * p + 4)
  const intervals: WeightInterval[] = table.criterionIds.map((criterionId, k) => {
    const s0 = w[k]!
    let restSum = 0
    for (let j = 0; j < p; j++) if (j !== k) restSum += w[j]!
    const share = (j: number) => (restSum > 0 ? w[j]! / restSum : 1 / (p - 1))
    const rest = new Float64Array(n)
    const restBound = new Float64Array(n)
    let inherited = 0
    for (let j = 0; j < p; j++) if (j !== k) inherited += share(j) * valueError[j]!
    for (let i = 0; i < n; i++) {
      let r = 0
      let magnitude = 0
      for (let j = 0; j < p; j++) {
        if (j === k) continue
        const term = share(j) * values[i * p + j]!
        r += term
        magnitude += Math.abs(term)
      }
      rest[i] = r
      restBound[i] = gRest * magnitude + inherited
    }

    const below: Crossing[] = []
    const above: Crossing[] = []
    for (let b = 0; b < n; b++) {
      if (b === a) continue
      // D(s) = S_a(s) − S_b(s) is linear, D(s₀) ≥ 0; b takes over on a side only if D is
      // negative, beyond rounding, at that end of [0, 1]. A tie at an end is no takeover.
      const atZero = rest[a]! - rest[b]!
      const zeroBound = restBound[a]! + restBound[b]!
      const atOne = values[a * p + k]! - values[b * p + k]!
      const oneBound = 2 * valueError[k]! + gamma(2) * (Math.abs(values[a * p + k]!) + Math.abs(values[b * p + k]!))
      const slope = atOne - atZero
      const gap = scores[a]! - scores[b]!
      const crossing = (side: number): Crossing => {
        if (tiedNow(b) || !(slope * side < 0)) return { at: s0, bound: 0, rival: b, slope }
        const at = Math.min(Math.max(s0 - gap / slope, side < 0 ? 0 : s0), side < 0 ? s0 : 1)
        const bound = (errorBounds[a]! + errorBounds[b]! + Math.abs(s0 - at) * (zeroBound + oneBound)) / Math.abs(slope) + gamma(4)
        return { at, bound, rival: b, slope }
      }
      if (atZero < -zeroBound && s0 > 0) below.push(crossing(-1))
      if (atOne < -oneBound && s0 < 1) above.push(crossing(1))
    }
    const low = takeover(below, true)
    const high = takeover(above, false)
    return {
      criterionId,
      weight: s0,
      lowest: low === null ? 0 : low.at,
      highest: high === null ? 1 : high.at,
      takenOverBelow: low === null ? null : table.alternativeIds[low.rival]!,
      takenOverAbove: high === null ? null : table.alternativeIds[high.rival]!,
    }
  })
  return { favouriteId: chosen, weights: Array.from(w), intervals }
}
