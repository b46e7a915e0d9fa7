import { solve, type Coefficients, type Constraint } from 'yalps'
import type { LedgerAnalysis, NormalisedTable, SupportVerdict } from '../types/engine'
import { tableOf } from './scalarise'

/**
 * How far below zero the LP's margin may fall and still count as supported (normalised units,
 * where every criterion spans [0, 1] over the efficient set).
 *
 * Why a tolerance here and none in dominance: dominance compares the facilitator's numbers
 * directly and exactly; pruning on a near-miss would hide an alternative that really is better
 * by a little, and would make dominance intransitive. Support is a statement about geometry
 * computed through rounded arithmetic: normalisation rescales every value (three roundings),
 * and the simplex solver treats magnitudes below its precision (yalps: 1e-8) as zero. Points
 * that are exactly on the convex hull (collinear ones, a margin of exactly 0) would otherwise
 * flip to "unsupported" on rounding noise. An alternative that dips into the hull by less than
 * a ten-millionth of every criterion's range is, for any practical weighting, on it.
 */
export const SUPPORT_TOLERANCE = 1e-7

/** Rows with the same values tie under every weighting, so they never decide support. */
function identicalRows(values: Float64Array, p: number, i: number, j: number): boolean {
  for (let k = 0; k < p; k++) if (values[i * p + k] !== values[j * p + k]) return false
  return true
}

/**
 * Whether row `index` of the table wins a weighted sum for some weighting in the simplex
 * (ties count as winning). Solves the LP
 *   maximise t  s.t.  w·(a − b) ≥ t for every other row b,  Σ w = 1,  w ≥ 0
 * with yalps and calls the row supported when t* ≥ −tolerance (see SUPPORT_TOLERANCE). Rows
 * identical to row `index` are left out (they tie under every weighting). Returns t* as `margin`
 * (> 0: some weighting makes it the sole winner; about 0: it only ever ties) and an optimal w as
 * a witness. yalps rounds its solution to its precision (1e-8), so at the witness the row's
 * score is within about that of the best, not always exactly level when t* = 0.
 * The rows are meant to be mutually non-dominated (the efficient set); a dominated row is simply
 * reported as it is. With no distinct rival: supported, margin 1, equal weights.
 * O(n·p) model, small simplex.
 */
export function supportOf(
  source: LedgerAnalysis | NormalisedTable,
  index: number,
  tolerance: number = SUPPORT_TOLERANCE,
): SupportVerdict {
  const table = tableOf(source)
  const { n, p, values } = table
  if (!Number.isInteger(index) || index < 0 || index >= n) {
    throw new RangeError(`supportOf: row ${index} is outside the table (${n} rows).`)
  }

  // yalps variables are non-negative, so t is shifted: s = t + shift ≥ 0. Since Σw = 1,
  // t ≥ −max(b_k − a_k) is always feasible, hence the shift.
  let shift = 0
  for (let j = 0; j < n; j++) {
    for (let k = 0; k < p; k++) shift = Math.max(shift, values[j * p + k]! - values[index * p + k]!)
  }
  const constraints = new Map<string, Constraint>([['sum', { equal: 1 }]])
  const wCoefficients: Map<string, number>[] = Array.from({ length: p }, () => new Map([['sum', 1]]))
  const sCoefficients = new Map<string, number>([['margin', 1]])
  for (let j = 0; j < n; j++) {
    if (identicalRows(values, p, index, j)) continue
    const key = `rival${j}`
    constraints.set(key, { min: -shift })
    for (let k = 0; k < p; k++) wCoefficients[k]!.set(key, values[index * p + k]! - values[j * p + k]!)
    sCoefficients.set(key, -1)
  }
  if (constraints.size === 1) return { supported: true, margin: 1, weights: new Array<number>(p).fill(1 / p) }
  const variables = new Map<string, Coefficients>(wCoefficients.map((c, k) => [`w${k}`, c]))
  variables.set('s', sCoefficients)
  const solution = solve(
    { direction: 'maximize', objective: 'margin', constraints, variables },
    { includeZeroVariables: true, checkCycles: true },
  )
  if (solution.status !== 'optimal') {
    // The LP is feasible and bounded by construction; anything else is a solver failure.
    throw new Error(`supportOf: the LP solver stopped with status "${solution.status}" for row ${index}.`)
  }
  const found = new Map(solution.variables)
  const weights = Array.from({ length: p }, (_, k) => Math.max(0, found.get(`w${k}`) ?? 0))
  const total = weights.reduce((a, b) => a + b, 0)
  const margin = (found.get('s') ?? 0) - shift
  return { supported: margin >= -tolerance, margin, weights: weights.map(w => w / total) }
}

/** `supportOf` for every row of the table, in table order. O(n) LPs. */
export function supportOfAll(source: LedgerAnalysis | NormalisedTable, tolerance: number = SUPPORT_TOLERANCE): SupportVerdict[] {
  const table = tableOf(source)
  return Array.from({ length: table.n }, (_, i) => supportOf(table, i, tolerance))
}

/**
 * Exact support test for two criteria, as a check on the LP. `points` is row-major n × 2 in
 * canonical form (both criteria minimised, e.g. from `canonicalise`), and `rows` picks rows
 * that do not dominate one another (the efficient set; identical rows are allowed).
 * Returns 1/0 per entry of `rows`: 1 when the point lies on the lower-left convex hull of the
 * picked points, collinear points included (a tie at the supporting weight counts as a win).
 * Only the signs of 2×2 cross products decide, so with integer coordinates below 2^26 in size
 * the answer is exact; with other doubles a near-zero cross product may round.
 * O(m log m) for m rows (Andrew's monotone chain, Inf. Process. Lett. 9, 1979).
 */
export function supportedOnPlane(points: ArrayLike<number>, rows: readonly number[]): Uint8Array {
  const x = (i: number) => points[2 * i]!
  const y = (i: number) => points[2 * i + 1]!
  const order = [...rows].sort((a, b) => x(a) - x(b) || y(a) - y(b))
  const distinct: number[] = []
  for (const i of order) {
    const last = distinct.at(-1)
    if (last === undefined || x(last) !== x(i) || y(last) !== y(i)) distinct.push(i)
  }
  const hull: number[] = []
  for (const c of distinct) {
    while (hull.length >= 2) {
      const a = hull.at(-2)!
      const b = hull.at(-1)!
      const cross = (x(b) - x(a)) * (y(c) - y(a)) - (y(b) - y(a)) * (x(c) - x(a))
      if (cross >= 0) break
      hull.pop()
    }
    hull.push(c)
  }
  const onHull = new Set(hull.map(i => `${x(i)},${y(i)}`))
  return Uint8Array.from(rows, i => (onHull.has(`${x(i)},${y(i)}`) ? 1 : 0))
}
