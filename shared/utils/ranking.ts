/**
 * Rank-order centroid weights (Barron & Barrett, "Decision quality using ranked attribute
 * weights", Management Science 42(11), 1996): the centroid of the set of weightings consistent
 * with a strict ranking, w_k = (1/n)·Σ_{i=k..n} 1/i for the k-th most important of n criteria.
 * Returns n weights summing to 1 (up to rounding), strictly decreasing. n must be a positive
 * integer (RangeError otherwise). O(n).
 */
export function rankOrderCentroid(n: number): number[] {
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`Need a positive whole number of criteria, got ${n}.`)
  const weights = new Array<number>(n)
  let tail = 0
  // Summed from the smallest term up, which is both the recurrence and the accurate order.
  for (let k = n; k >= 1; k--) {
    tail += 1 / k
    weights[k - 1] = tail / n
  }
  return weights
}

/**
 * Weights from a ranking of the criteria: `ranks[k]` is criterion k's rank, smaller = more
 * important; only the order matters (1, 2, 2, 3 and 10, 20, 20, 30 give the same weights).
 * Criteria sharing a rank share the positions they jointly occupy and each receives the mean of
 * those positions' ROC weights, so the weights still sum to 1, tied criteria get equal weight,
 * and a tie sits exactly between the two strict rankings it could be broken into.
 * Empty input or a non-finite rank is a RangeError. O(n log n).
 */
export function weightsFromRanking(ranks: readonly number[]): number[] {
  const n = ranks.length
  if (n === 0) throw new RangeError('Rank at least one criterion.')
  ranks.forEach((rank, k) => {
    if (typeof rank !== 'number' || !Number.isFinite(rank)) {
      throw new RangeError(`The rank of criterion ${k + 1} is not a finite number.`)
    }
  })
  const roc = rankOrderCentroid(n)
  const order = ranks.map((_, k) => k).sort((a, b) => ranks[a]! - ranks[b]!)
  const weights = new Array<number>(n)
  for (let start = 0; start < n;) {
    let stop = start + 1
    while (stop < n && ranks[order[stop]!] === ranks[order[start]!]) stop++
    let shared = 0
    for (let position = start; position < stop; position++) shared += roc[position]!
    for (let position = start; position < stop; position++) weights[order[position]!] = shared / (stop - start)
    start = stop
  }
  return weights
}
