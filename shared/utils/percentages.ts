/**
 * Whole percentages for display that always add up to exactly `total` (100 unless told), by the
 * largest-remainder method: each weight's exact share of `total` is rounded down, and the units
 * still missing go, one each, to the shares with the largest remainders (ties, to within 1e-9 of a
 * percentage point: the earlier index first, so the same weights always give the same figures). Every result is its exact
 * share rounded down or up, never further off.
 *
 * Weights may be on any non-negative scale (they are divided by their sum). Empty input gives [].
 * When every weight is zero there is nothing to share and every percentage is 0. A negative,
 * NaN or infinite weight, or a `total` that is not a whole number ≥ 0, is a RangeError.
 * O(n log n).
 */
export function largestRemainderPercentages(weights: readonly number[], total = 100): number[] {
  if (!Number.isInteger(total) || total < 0) throw new RangeError(`The total must be a whole number of at least 0, got ${total}.`)
  let largest = 0
  weights.forEach((w, k) => {
    if (typeof w !== 'number' || Number.isNaN(w)) throw new RangeError(`Weight ${k + 1} is not a number.`)
    if (!Number.isFinite(w)) throw new RangeError(`Weight ${k + 1} is infinite.`)
    if (w < 0) throw new RangeError(`Weight ${k + 1} is negative (${w}).`)
    if (w > largest) largest = w
  })
  if (largest === 0) return weights.map(() => 0)
  // Scaling by the largest weight first keeps the sum finite for huge weights.
  const scaled = weights.map(w => w / largest)
  const sum = scaled.reduce((a, b) => a + b, 0)
  const quotas = scaled.map(w => (w / sum) * total)
  const shares = quotas.map(q => Math.floor(q))
  // The floors add up to at most `total` (their quotas add up to it, give or take rounding), and
  // fall short by fewer units than there are weights: one pass hands the missing units out.
  const missing = total - shares.reduce((a, b) => a + b, 0)
  // Remainders are compared on a grid of 1e-9, so weights that are equal in decimal but differ in
  // their last binary digits (0.055 computed two ways) tie, and the tie goes by index every time.
  const remainder = quotas.map((q, k) => Math.round((q - shares[k]!) * 1e9))
  const order = quotas.map((_, k) => k).sort((a, b) => remainder[b]! - remainder[a]! || a - b)
  for (let i = 0; i < missing; i++) shares[order[i % order.length]!]! += 1
  return shares
}

/**
 * A weight (a share of 1) as whole percentages bounding it from inside: the lower end of an
 * interval rounded up and the upper end rounded down, so "between 18% and 41%" is true at every
 * whole percentage it names. A tolerance of 1e-9 keeps 0.41 (0.41000000000000003) reading 41.
 */
export function innerPercentBounds(lowest: number, highest: number): { low: number, high: number } {
  return {
    low: Math.max(0, Math.ceil(lowest * 100 - 1e-9)),
    high: Math.min(100, Math.floor(highest * 100 + 1e-9)),
  }
}
