import type { LedgerAnalysis, NormalisedTable } from '../types/engine'
import { gamma, normaliseWeights, tableOf } from './scalarise'

/*
 * The weight triangle: every weighting of three criteria is a point t = (t₀, t₁, t₂), t ≥ 0,
 * Σt = 1, of a triangle whose corners are "all weight on one criterion". With more criteria,
 * three are chosen and the others are held at the weights of a given weighting h (e.g. the
 * group's): the chosen three share what is left, m = Σ_{c chosen} h_c, so the full weighting at
 * t is w = h on the others and m·t on the chosen. Then every weighted sum is linear in t,
 *   S_i(t) = Σ_c t_c·u_ic,   u_ic = m·v_ic + Σ_{j not chosen} h_j·v_ij,
 * and the set where alternative a is a favourite (ties count) is the triangle cut by the
 * half-planes S_a(t) ≥ S_b(t), one per rival b: a convex polygon, possibly empty or of zero
 * area (an alternative that only ever ties, on an edge or a point). It is computed exactly
 * (Sutherland & Hodgman, "Reentrant polygon clipping", CACM 17(1), 1974, one half-plane at a
 * time), with a tolerance of a few rounding errors so alternatives that tie in exact arithmetic
 * are not split by rounding noise.
 *
 * Area shares are affine invariants, so the share of a polygon is the share of weightings
 * (uniform on the triangle) that favour the alternative: its first-rank acceptability in SMAA
 * terms (see acceptability.ts). Alternatives with identical values (u rows equal) tie
 * everywhere: each is given the same whole polygon in `areaShare`, they are listed in each
 * other's `sharedWith`, and `share` divides the area equally among them (as SMAA credits ties),
 * so the `share`s of all alternatives sum to 1.
 *
 * Drawing: `points` are the vertices on an equilateral triangle of side 1 in SVG coordinates
 * (y down): corner 0 at the top (½, 0), corner 1 bottom left (0, √3/2), corner 2 bottom right
 * (1, √3/2). Scale them to the picture.
 */

/** Height of the equilateral triangle of side 1. */
export const TRIANGLE_HEIGHT = Math.sqrt(3) / 2

/** The SVG point (y down, side 1) of a weighting of the three corners (barycentric, any positive scale). */
export function trianglePoint(t: ArrayLike<number>): [number, number] {
  const sum = t[0]! + t[1]! + t[2]!
  const a = t[0]! / sum
  const b = t[1]! / sum
  const c = t[2]! / sum
  return [0.5 * a + 0 * b + 1 * c, 0 * a + TRIANGLE_HEIGHT * (b + c)]
}

/** The barycentric weighting (corner order, sums to 1) of an SVG point of the triangle; may be outside [0, 1] off the triangle. */
export function triangleWeights(point: readonly [number, number]): [number, number, number] {
  const [x, y] = point
  const t0 = 1 - y / TRIANGLE_HEIGHT
  const t2 = x - 0.5 * t0
  return [t0, 1 - t0 - t2, t2]
}

export type Barycentric = [number, number, number]

export interface WeightRegion {
  alternativeId: string
  /** Polygon vertices as corner weightings t (sum 1), in order around the polygon; empty when it never wins. */
  vertices: Barycentric[]
  /** The same vertices in SVG coordinates (see `trianglePoint`). */
  points: [number, number][]
  /** Polygon area / triangle area: the share of the triangle where it is a favourite (ties count). */
  areaShare: number
  /** `areaShare` divided among the alternatives that share the polygon (identical values); the shares sum to 1. */
  share: number
  /** Alternatives with identical values here, which have the very same polygon. */
  sharedWith: string[]
  /** True when it wins somewhere but only on a set of zero area (a segment or a point). */
  degenerate: boolean
  /** Centroid of the polygon (corner weightings); of its vertices when degenerate; null when empty. */
  centroid: Barycentric | null
}

export interface WeightMap {
  /** Criterion ids at corners 0, 1, 2. */
  criterionIds: [string, string, string]
  /** Column of each corner criterion in the table. */
  criterionIndices: [number, number, number]
  /**
   * The weighting held on the other criteria (criterion order, 0 on the three corners); the full
   * weighting at t is `held` plus `cornerShare`·t on the corners. All zero for three criteria.
   */
  held: number[]
  /** Share of the total weight that the three corners split (1 for three criteria). */
  cornerShare: number
  /** Optional bounds the triangle was cut to (corner weightings), or null. */
  bounds: { lower: Barycentric, upper: Barycentric } | null
  /** The drawing area: the triangle, or the triangle cut to `bounds` (corner weightings and SVG points). */
  outline: { vertices: Barycentric[], points: [number, number][], areaShare: number }
  regions: WeightRegion[]
}

export interface WeightMapOptions {
  /** The three criterion ids for corners 0, 1, 2; default the table's three criteria (required when there are more). */
  criteria?: readonly [string, string, string]
  /** For more than three criteria: a weighting (criterion order) whose weights on the others are held. */
  held?: ArrayLike<number>
  /**
   * Cut the triangle to lower ≤ t ≤ upper (corner weightings), e.g. the range of submitted
   * weightings; areas and shares are then relative to the cut region.
   */
  bounds?: { lower: ArrayLike<number>, upper: ArrayLike<number> }
}

/** Clips a convex polygon (barycentric vertices) to f(t) = Σ t_c·d_c ≥ −tolerance. */
function clip(polygon: Barycentric[], d: Barycentric, tolerance: number): Barycentric[] {
  const f = (t: Barycentric) => t[0] * d[0] + t[1] * d[1] + t[2] * d[2]
  const out: Barycentric[] = []
  for (let j = 0; j < polygon.length; j++) {
    const P = polygon[j]!
    const Q = polygon[(j + 1) % polygon.length]!
    const fP = f(P)
    const fQ = f(Q)
    if (fP >= -tolerance) out.push(P)
    if ((fP > tolerance && fQ < -tolerance) || (fP < -tolerance && fQ > tolerance)) {
      const s = fP / (fP - fQ)
      out.push([P[0] + s * (Q[0] - P[0]), P[1] + s * (Q[1] - P[1]), P[2] + s * (Q[2] - P[2])])
    }
  }
  // Drop repeated vertices (a clip through a vertex, or a vertex on the line).
  const distinct: Barycentric[] = []
  for (const v of out) {
    const last = distinct.at(-1)
    if (last === undefined || Math.abs(last[0] - v[0]) + Math.abs(last[1] - v[1]) + Math.abs(last[2] - v[2]) > 1e-14) distinct.push(v)
  }
  while (distinct.length > 1) {
    const first = distinct[0]!
    const last = distinct.at(-1)!
    if (Math.abs(last[0] - first[0]) + Math.abs(last[1] - first[1]) + Math.abs(last[2] - first[2]) > 1e-14) break
    distinct.pop()
  }
  return distinct
}

/** Signed area and centroid in the (t₁, t₂) plane, where the whole triangle has area ½. */
function areaAndCentroid(polygon: readonly Barycentric[]): { area: number, centroid: Barycentric | null } {
  if (polygon.length === 0) return { area: 0, centroid: null }
  let twiceArea = 0
  let cx = 0
  let cy = 0
  for (let j = 0; j < polygon.length; j++) {
    const [, x1, y1] = polygon[j]!
    const [, x2, y2] = polygon[(j + 1) % polygon.length]!
    const cross = x1 * y2 - x2 * y1
    twiceArea += cross
    cx += (x1 + x2) * cross
    cy += (y1 + y2) * cross
  }
  const area = Math.abs(twiceArea) / 2
  if (area <= 1e-13) {
    const mean: Barycentric = [0, 0, 0]
    for (const v of polygon) for (let c = 0; c < 3; c++) mean[c] = mean[c]! + v[c]! / polygon.length
    return { area: 0, centroid: mean }
  }
  const x = cx / (3 * twiceArea)
  const y = cy / (3 * twiceArea)
  return { area, centroid: [1 - x - y, x, y] }
}

function checkedBounds(bounds: WeightMapOptions['bounds']): { lower: Barycentric, upper: Barycentric } | null {
  if (bounds === undefined) return null
  const read = (values: ArrayLike<number>, name: string): Barycentric => {
    if (values.length !== 3) throw new RangeError(`The ${name} bounds need three values, one per corner, but got ${values.length}.`)
    return [0, 1, 2].map((c) => {
      const v = values[c]
      if (typeof v !== 'number' || !Number.isFinite(v) || v < 0 || v > 1) {
        throw new RangeError(`The ${name} bound of corner ${c + 1} must be a number from 0 to 1, but it is ${String(v)}.`)
      }
      return v
    }) as Barycentric
  }
  const lower = read(bounds.lower, 'lower')
  const upper = read(bounds.upper, 'upper')
  for (let c = 0; c < 3; c++) {
    if (lower[c]! > upper[c]!) throw new RangeError(`The lower bound of corner ${c + 1} (${lower[c]}) is above its upper bound (${upper[c]}).`)
  }
  if (lower[0] + lower[1] + lower[2] > 1 + 1e-12 || upper[0] + upper[1] + upper[2] < 1 - 1e-12) {
    throw new RangeError('The bounds leave no weighting: the lower bounds add up to more than 1 or the upper bounds to less than 1.')
  }
  return { lower, upper }
}

/**
 * Exact weighted-sum favourite regions on the weight triangle of three criteria (see the notes
 * at the top of this file), one per table row in table order (for an analysis: the efficient
 * alternatives). RangeError when the table has fewer than three criteria, when the corner
 * criteria are unknown or repeated, when there are more than three criteria and no `held`
 * weighting (or it leaves the corners no weight), or on bad bounds. O(n²) clips of a polygon
 * with at most n + 3 vertices, so O(n³) in the worst case; n ≤ a few hundred is instant.
 */
export function weightMap(source: LedgerAnalysis | NormalisedTable, options: WeightMapOptions = {}): WeightMap {
  const table = tableOf(source)
  const { n, p, values, valueError } = table
  if (p < 3) throw new RangeError(`The weight triangle needs three criteria, but the table has ${p}.`)
  const ids = options.criteria ?? (p === 3 ? table.criterionIds as readonly string[] : null)
  if (ids === null) throw new RangeError(`The table has ${p} criteria: choose the three for the corners.`)
  if (ids.length !== 3) throw new RangeError(`Choose exactly three criteria for the corners, not ${ids.length}.`)
  const corners = ids.map((id) => {
    const k = table.criterionIds.indexOf(id)
    if (k < 0) throw new RangeError(`"${id}" is not a criterion of this table.`)
    return k
  }) as [number, number, number]
  if (new Set(corners).size !== 3) throw new RangeError('The three corner criteria must be different.')

  const held = new Float64Array(p)
  let cornerShare = 1
  if (p > 3) {
    if (options.held === undefined) throw new RangeError('With more than three criteria, give the weighting to hold the other criteria at.')
    const h = normaliseWeights(options.held, p)
    cornerShare = h[corners[0]]! + h[corners[1]]! + h[corners[2]]!
    if (!(cornerShare > 0)) throw new RangeError('The held weighting gives the three corner criteria no weight, so the triangle has no room.')
    for (let k = 0; k < p; k++) if (!corners.includes(k)) held[k] = h[k]!
  }
  const bounds = checkedBounds(options.bounds)

  // u_ic = m·v_ic + Σ_{j held} h_j·v_ij, with a rounding bound shared by every comparison.
  const u = new Float64Array(n * 3)
  let inherited = 0
  for (let k = 0; k < p; k++) inherited += (corners.includes(k) ? cornerShare : held[k]!) * valueError[k]!
  let magnitude = 0
  for (let i = 0; i < n; i++) {
    let rest = 0
    for (let k = 0; k < p; k++) if (!corners.includes(k)) rest += held[k]! * values[i * p + k]!
    for (let c = 0; c < 3; c++) {
      u[i * 3 + c] = cornerShare * values[i * p + corners[c]!]! + rest
      magnitude = Math.max(magnitude, Math.abs(u[i * 3 + c]!))
    }
  }
  // Two sums, each with error ≤ γ·magnitude + inherited, plus the roundings of the clip itself.
  const tolerance = 2 * (gamma(2 * p + 8) * Math.max(magnitude, 1) + inherited)

  let outline: Barycentric[] = [[1, 0, 0], [0, 1, 0], [0, 0, 1]]
  if (bounds !== null) {
    for (let c = 0; c < 3; c++) {
      const up: Barycentric = [0, 0, 0]
      up[c] = 1
      outline = clip(outline, [up[0] - bounds.lower[c]!, up[1] - bounds.lower[c]!, up[2] - bounds.lower[c]!], 0)
      outline = clip(outline, [bounds.upper[c]! - up[0], bounds.upper[c]! - up[1], bounds.upper[c]! - up[2]], 0)
    }
  }
  const outlineArea = areaAndCentroid(outline).area

  const same = (a: number, b: number) =>
    Math.abs(u[a * 3]! - u[b * 3]!) <= tolerance
    && Math.abs(u[a * 3 + 1]! - u[b * 3 + 1]!) <= tolerance
    && Math.abs(u[a * 3 + 2]! - u[b * 3 + 2]!) <= tolerance

  const regions: WeightRegion[] = []
  for (let a = 0; a < n; a++) {
    let polygon = outline
    const sharedWith: string[] = []
    for (let b = 0; b < n && polygon.length > 0; b++) {
      if (b === a) continue
      if (same(a, b)) {
        sharedWith.push(table.alternativeIds[b]!)
        continue
      }
      polygon = clip(polygon, [u[a * 3]! - u[b * 3]!, u[a * 3 + 1]! - u[b * 3 + 1]!, u[a * 3 + 2]! - u[b * 3 + 2]!], tolerance)
    }
    // Finish the list of twins even when the polygon emptied early.
    for (let b = 0; b < n; b++) {
      if (b !== a && same(a, b) && !sharedWith.includes(table.alternativeIds[b]!)) sharedWith.push(table.alternativeIds[b]!)
    }
    const { area, centroid } = areaAndCentroid(polygon)
    const areaShare = outlineArea > 0 ? area / outlineArea : polygon.length > 0 ? 1 : 0
    regions.push({
      alternativeId: table.alternativeIds[a]!,
      vertices: polygon.map(v => [...v] as Barycentric),
      points: polygon.map(trianglePoint),
      areaShare,
      share: areaShare / (sharedWith.length + 1),
      sharedWith: sharedWith.sort((x, y) => table.alternativeIds.indexOf(x) - table.alternativeIds.indexOf(y)),
      degenerate: polygon.length > 0 && area === 0,
      centroid,
    })
  }
  return {
    criterionIds: [...corners.map(k => table.criterionIds[k]!)] as [string, string, string],
    criterionIndices: corners,
    held: Array.from(held),
    cornerShare,
    bounds,
    outline: { vertices: outline, points: outline.map(trianglePoint), areaShare: outlineArea * 2 },
    regions,
  }
}

/**
 * Where a full weighting (criterion order, any positive scale) sits on the map: its corner
 * weights rescaled to sum 1, and the SVG point. Exact for three criteria; with more, the point
 * ignores how the weighting differs from the held weights on the other criteria. Null when it
 * gives the three corners no weight. RangeError on bad weights.
 */
export function placeOnMap(map: WeightMap, weights: ArrayLike<number>): { t: Barycentric, point: [number, number] } | null {
  const w = normaliseWeights(weights, map.held.length)
  const [a, b, c] = map.criterionIndices
  const sum = w[a]! + w[b]! + w[c]!
  if (!(sum > 0)) return null
  const t: Barycentric = [w[a]! / sum, w[b]! / sum, w[c]! / sum]
  return { t, point: trianglePoint(t) }
}

export interface WeightSegment {
  alternativeId: string
  /** The interval of the first criterion's share [lowest, highest] where it is a favourite (ties count); null when never. */
  interval: [number, number] | null
  /** Length of the interval: the share of the weight line where it is a favourite. */
  lengthShare: number
  /** `lengthShare` divided among alternatives with identical values; the shares sum to 1. */
  share: number
  sharedWith: string[]
  /** Midpoint of the interval (the first criterion's share), the central weight; null when never. */
  centre: number | null
}

export interface WeightLine {
  /** The two criterion ids; the line runs over the first one's share t (the second gets 1 − t). */
  criterionIds: [string, string]
  criterionIndices: [number, number]
  /** As in `WeightMap`: the weighting held on the other criteria, and what the two share. */
  held: number[]
  pairShare: number
  segments: WeightSegment[]
}

/**
 * The two-criterion counterpart of `weightMap`: the exact interval of weightings t (the first
 * criterion's share among the two; the second gets 1 − t) where each alternative is a
 * weighted-sum favourite, ties counting, as the intersection of the half-lines S_a ≥ S_b.
 * Its length is the alternative's first-rank acceptability for uniform weights. With more
 * than two criteria choose two and hold the others at `held` (as in `weightMap`). Identical
 * alternatives share one interval (see `share`). RangeError as in `weightMap`. O(n²).
 */
export function weightLine(
  source: LedgerAnalysis | NormalisedTable,
  options: { criteria?: readonly [string, string], held?: ArrayLike<number> } = {},
): WeightLine {
  const table = tableOf(source)
  const { n, p, values, valueError } = table
  if (p < 2) throw new RangeError(`The weight line needs two criteria, but the table has ${p}.`)
  const ids = options.criteria ?? (p === 2 ? table.criterionIds as readonly string[] : null)
  if (ids === null) throw new RangeError(`The table has ${p} criteria: choose the two for the ends of the line.`)
  if (ids.length !== 2) throw new RangeError(`Choose exactly two criteria, not ${ids.length}.`)
  const pair = ids.map((id) => {
    const k = table.criterionIds.indexOf(id)
    if (k < 0) throw new RangeError(`"${id}" is not a criterion of this table.`)
    return k
  }) as [number, number]
  if (pair[0] === pair[1]) throw new RangeError('The two criteria must be different.')
  const held = new Float64Array(p)
  let pairShare = 1
  if (p > 2) {
    if (options.held === undefined) throw new RangeError('With more than two criteria, give the weighting to hold the other criteria at.')
    const h = normaliseWeights(options.held, p)
    pairShare = h[pair[0]]! + h[pair[1]]!
    if (!(pairShare > 0)) throw new RangeError('The held weighting gives the two criteria no weight, so the line has no room.')
    for (let k = 0; k < p; k++) if (!pair.includes(k)) held[k] = h[k]!
  }
  const u = new Float64Array(n * 2)
  let inherited = 0
  for (let k = 0; k < p; k++) inherited += (pair.includes(k) ? pairShare : held[k]!) * valueError[k]!
  let magnitude = 0
  for (let i = 0; i < n; i++) {
    let rest = 0
    for (let k = 0; k < p; k++) if (!pair.includes(k)) rest += held[k]! * values[i * p + k]!
    for (let c = 0; c < 2; c++) {
      u[i * 2 + c] = pairShare * values[i * p + pair[c]!]! + rest
      magnitude = Math.max(magnitude, Math.abs(u[i * 2 + c]!))
    }
  }
  const tolerance = 2 * (gamma(2 * p + 8) * Math.max(magnitude, 1) + inherited)
  const same = (a: number, b: number) => Math.abs(u[a * 2]! - u[b * 2]!) <= tolerance && Math.abs(u[a * 2 + 1]! - u[b * 2 + 1]!) <= tolerance

  const segments: WeightSegment[] = []
  for (let a = 0; a < n; a++) {
    let lo = 0
    let hi = 1
    const sharedWith: string[] = []
    for (let b = 0; b < n; b++) {
      if (b === a) continue
      if (same(a, b)) {
        sharedWith.push(table.alternativeIds[b]!)
        continue
      }
      // f(t) = t·d₀ + (1 − t)·d₁ ≥ 0: at t = 0 it is d₁, at t = 1 it is d₀.
      const d0 = u[a * 2]! - u[b * 2]!
      const d1 = u[a * 2 + 1]! - u[b * 2 + 1]!
      const okAtZero = d1 >= -tolerance
      const okAtOne = d0 >= -tolerance
      if (okAtZero && okAtOne) continue
      if (!okAtZero && !okAtOne) {
        lo = 1
        hi = 0
        continue
      }
      const root = Math.min(1, Math.max(0, d1 / (d1 - d0)))
      if (okAtOne) lo = Math.max(lo, root)
      else hi = Math.min(hi, root)
    }
    const interval: [number, number] | null = lo <= hi ? [lo, hi] : null
    const lengthShare = interval === null ? 0 : hi - lo
    segments.push({
      alternativeId: table.alternativeIds[a]!,
      interval,
      lengthShare,
      share: lengthShare / (sharedWith.length + 1),
      sharedWith,
      centre: interval === null ? null : (lo + hi) / 2,
    })
  }
  return {
    criterionIds: [table.criterionIds[pair[0]]!, table.criterionIds[pair[1]]!],
    criterionIndices: pair,
    held: Array.from(held),
    pairShare,
    segments,
  }
}
