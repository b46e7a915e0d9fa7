/**
 * Chart series from a ledger view: the front of a pair of criteria (for the scatter chart) and
 * the value paths of the efficient alternatives (for the line chart). Pure data in, data out,
 * so the charts, the gallery and the tests all draw from the same numbers.
 */
import { displayStatusOf, type DisplayStatus } from '../statusVocabulary'
import type { Criterion, Direction } from '../types/decision'
import type { AlternativeVerdict } from '../types/engine'
import type { LedgerView } from '../types/ledgerView'
import { brokenLimitsOf } from './feasibility'
import { idealAndNadir, normaliseValue } from './normalise'
import { canonicalise, paretoSets } from './pareto'

type PlottedStatus = Exclude<DisplayStatus, 'chosen'>

/** One alternative on the scatter chart of a pair of criteria. */
export interface PairPoint {
  id: string
  name: string
  x: number
  y: number
  /** Status over all criteria (from the engine), not over the pair. */
  status: PlottedStatus
  /** Efficient for this pair alone, among the alternatives within limits. */
  onFront: boolean
}

/** One corner of the pair's front: a distinct (x, y) and every alternative that has it. */
export interface FrontStep {
  x: number
  y: number
  ids: string[]
  names: string[]
}

export interface PairFront {
  x: Criterion
  y: Criterion
  /** Every alternative with finite scores on both criteria, in ledger order (infeasible included). */
  points: PairPoint[]
  /** The pair's front, one entry per distinct point, by x ascending. Infeasible alternatives never count. */
  front: FrontStep[]
  /**
   * The front as a staircase, ready to draw with straight segments: each front point, then the
   * corner at the worse x and worse y of it and the next one, then the next point. The staircase
   * is the edge of the region the front dominates, whichever way each criterion points.
   */
  staircase: Array<[number, number]>
}

function verdictsById(view: LedgerView): Map<string, AlternativeVerdict> {
  return new Map((view.analysis?.verdicts ?? []).map(v => [v.id, v]))
}

/** The worse of two values for a criterion with this direction. */
function worse(a: number, b: number, direction: Direction): number {
  return direction === 'min' ? Math.max(a, b) : Math.min(a, b)
}

/**
 * The scatter of two criteria (ids `xId`, `yId`; the same id twice is allowed) with the front of
 * that pair among the alternatives within limits. Statuses come from the engine's verdicts; an
 * alternative without one (no analysis) counts as within limits unless it breaks a limit.
 * Alternatives with a missing or non-finite score on either criterion are left out.
 * Exact ties share one front step. Null when either criterion does not exist. O(n log n).
 */
export function pairFront(view: LedgerView, xId: string, yId: string): PairFront | null {
  const x = view.criteria.find(c => c.id === xId)
  const y = view.criteria.find(c => c.id === yId)
  if (!x || !y) return null
  const verdicts = verdictsById(view)

  const points: PairPoint[] = []
  for (const alternative of view.alternatives) {
    const sx = alternative.scores[x.id]
    const sy = alternative.scores[y.id]
    if (typeof sx !== 'number' || typeof sy !== 'number' || !Number.isFinite(sx) || !Number.isFinite(sy)) continue
    const verdict = verdicts.get(alternative.id)
    const status: PlottedStatus = verdict
      ? displayStatusOf(verdict)
      : brokenLimitsOf(view.criteria, alternative).length > 0 ? 'infeasible' : 'efficient'
    points.push({ id: alternative.id, name: alternative.name, x: sx, y: sy, status, onFront: false })
  }

  const n = points.length
  const raw = new Float64Array(n * 2)
  const consider = new Uint8Array(n)
  points.forEach((point, i) => {
    raw[2 * i] = point.x
    raw[2 * i + 1] = point.y
    consider[i] = point.status === 'infeasible' ? 0 : 1
  })
  const sets = paretoSets(canonicalise(raw, n, 2, [x.direction, y.direction]), n, 2, consider)

  const stepOf = new Map<number, FrontStep>()
  for (let i = 0; i < n; i++) {
    if (sets.efficient[i] !== 1) continue
    const point = points[i]!
    point.onFront = true
    const group = sets.duplicateOf[i]!
    const step = stepOf.get(group)
    if (step) {
      step.ids.push(point.id)
      step.names.push(point.name)
    }
    else stepOf.set(group, { x: point.x, y: point.y, ids: [point.id], names: [point.name] })
  }
  // Distinct efficient points of a pair never share an x (the one with the better y would dominate).
  const front = [...stepOf.values()].sort((a, b) => a.x - b.x || a.y - b.y)

  const staircase: Array<[number, number]> = []
  front.forEach((step, k) => {
    const previous = front[k - 1]
    if (previous) staircase.push([worse(previous.x, step.x, x.direction), worse(previous.y, step.y, y.direction)])
    staircase.push([step.x, step.y])
  })
  return { x, y, points, front, staircase }
}

/**
 * Points thinned to at most one per cell of a `columns` × `rows` grid over the bounds of all the
 * points given, keeping the first in each cell (so the result follows the input order). Used to
 * keep a scatter of thousands of faded points light: points that would overlap on screen are
 * drawn once. Fewer than `columns × rows` points are still thinned if they share cells;
 * callers thin only above a size that matters. Empty in, empty out. O(n).
 */
export function thinPoints<T extends { x: number, y: number }>(points: readonly T[], columns: number, rows: number): T[] {
  if (points.length === 0) return []
  let minX = Infinity
  let maxX = -Infinity
  let minY = Infinity
  let maxY = -Infinity
  for (const p of points) {
    if (p.x < minX) minX = p.x
    if (p.x > maxX) maxX = p.x
    if (p.y < minY) minY = p.y
    if (p.y > maxY) maxY = p.y
  }
  const spanX = maxX - minX || 1
  const spanY = maxY - minY || 1
  const taken = new Uint8Array(columns * rows)
  const kept: T[] = []
  for (const p of points) {
    const column = Math.min(columns - 1, Math.floor(((p.x - minX) / spanX) * columns))
    const row = Math.min(rows - 1, Math.floor(((p.y - minY) / spanY) * rows))
    const cell = row * columns + column
    if (taken[cell] === 1) continue
    taken[cell] = 1
    kept.push(p)
  }
  return kept
}

/** One criterion of the value-path chart with its scale over the efficient set. */
export interface ValueAxis {
  criterion: Criterion
  /** Ideal: the best value among efficient alternatives (drawn at 1). */
  best: number
  /** Nadir: the worst value among efficient alternatives (drawn at 0). */
  worst: number
  /** Every efficient alternative has the same value: the criterion separates none of them. */
  constant: boolean
}

/** One efficient alternative across all criteria. */
export interface ValuePath {
  id: string
  name: string
  status: 'efficient' | 'unsupported'
  /** Per criterion (axis order), 0 = nadir … 1 = ideal; every value lies in [0, 1]. A constant criterion gives 1. */
  values: number[]
  /** The same in the criterion's own unit. */
  raw: number[]
}

export interface ValuePaths {
  axes: ValueAxis[]
  paths: ValuePath[]
  /** How many efficient alternatives there are (paths may hold fewer, see `limit`). */
  total: number
}

/**
 * Every efficient alternative as a path across all criteria, scaled 0–1 over the efficient set
 * (1 = ideal, 0 = nadir; `normaliseValue`), in ledger order, at most `limit` of them. Uses the
 * engine's ideal and nadir when the view has them, else works them out from the efficient ids.
 * No analysis or nothing efficient: no paths. O(n·p).
 */
export function valuePaths(view: LedgerView, limit = Infinity): ValuePaths {
  const criteria = view.criteria
  const efficientIds = new Set(view.analysis?.efficientIds ?? [])
  const efficient = view.alternatives.filter(a => efficientIds.has(a.id))
  if (efficient.length === 0 || criteria.length === 0) return { axes: [], paths: [], total: 0 }

  const p = criteria.length
  let ideal = view.analysis?.ideal ?? null
  let nadir = view.analysis?.nadir ?? null
  if (!ideal || !nadir || criteria.some(c => ideal![c.id] === undefined || nadir![c.id] === undefined)) {
    const raw = new Float64Array(efficient.length * p)
    efficient.forEach((a, i) => criteria.forEach((c, k) => {
      raw[i * p + k] = a.scores[c.id]!
    }))
    const range = idealAndNadir(raw, efficient.length, p, criteria.map(c => c.direction), new Uint8Array(efficient.length).fill(1))!
    ideal = Object.fromEntries(criteria.map((c, k) => [c.id, range.best[k]!]))
    nadir = Object.fromEntries(criteria.map((c, k) => [c.id, range.worst[k]!]))
  }
  const axes: ValueAxis[] = criteria.map(criterion => ({
    criterion,
    best: ideal![criterion.id]!,
    worst: nadir![criterion.id]!,
    constant: ideal![criterion.id] === nadir![criterion.id],
  }))

  const verdicts = verdictsById(view)
  const paths = efficient.slice(0, limit).map((alternative): ValuePath => {
    const raw = criteria.map(c => alternative.scores[c.id]!)
    const verdict = verdicts.get(alternative.id)
    return {
      id: alternative.id,
      name: alternative.name,
      status: verdict && displayStatusOf(verdict) === 'unsupported' ? 'unsupported' : 'efficient',
      raw,
      values: raw.map((value, k) => normaliseValue(value, axes[k]!.best, axes[k]!.worst, criteria[k]!.direction)),
    }
  })
  return { axes, paths, total: efficient.length }
}

/** Text made safe to put inside HTML (chart tooltips are HTML strings): & < > " ' escaped. */
export function escapeTooltipText(text: string): string {
  return text.replace(/[&<>"']/g, c => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', '\'': '&#39;' })[c]!)
}

/** A round axis range: ticks at `min`, `min + step`, … `max`, labelled with `decimals` places. */
export interface NiceAxis {
  min: number
  max: number
  step: number
  /** Number of intervals between ticks (what chart libraries call the tick amount). */
  ticks: number
  decimals: number
}

/** 1, 2, 2.5 or 5 times a power of ten, at least `x` (x > 0), and the decimals it needs. */
function roundStep(x: number): { step: number, decimals: number } {
  let exponent = Math.floor(Math.log10(x))
  let fraction = x / 10 ** exponent
  if (fraction > 5) {
    exponent += 1
    fraction = 1
  }
  const nice = fraction <= 1 ? 1 : fraction <= 2 ? 2 : fraction <= 2.5 ? 2.5 : 5
  return { step: Number((nice * 10 ** exponent).toPrecision(12)), decimals: Math.min(20, Math.max(0, -exponent + (nice === 2.5 ? 1 : 0))) }
}

const FALLBACK_AXIS: NiceAxis = { min: 0, max: 1, step: 0.2, ticks: 5, decimals: 1 }
/** Spans below this are treated as a single value (their steps would underflow). */
const TINY_SPAN = 1e-280

/**
 * An axis range covering [lowest, highest] with a little room at both ends (4 % of the span)
 * and round ticks (steps of 1, 2, 2.5 or 5 × 10ⁿ), about `target` intervals. A single value (or a
 * span too small to draw) gets a range of ±10 % around it (±1 around 0). Non-finite input, or a
 * span beyond double range, gives 0–1. Bounds are rounded to 12 significant digits so no
 * 0.30000000000000004 reaches a label.
 */
export function niceAxis(lowest: number, highest: number, target = 5): NiceAxis {
  if (!Number.isFinite(lowest) || !Number.isFinite(highest)) return { ...FALLBACK_AXIS }
  let low = Math.min(lowest, highest)
  let high = Math.max(lowest, highest)
  // A span under a billionth of the values is drawn as one value: finer steps would need more
  // significant digits than the 12 the bounds are snapped to, and could leave data outside.
  if (high - low < Math.max(TINY_SPAN, Math.abs(low) * 1e-9, Math.abs(high) * 1e-9)) {
    const middle = low / 2 + high / 2
    const half = Math.abs(middle) > TINY_SPAN ? Math.abs(middle) / 10 : 1
    low = middle - half
    high = middle + half
  }
  const room = (high - low) * 0.04
  low -= room
  high += room
  if (!Number.isFinite(high - low)) return { ...FALLBACK_AXIS }
  const { step, decimals } = roundStep((high - low) / Math.max(1, target))
  const snap = (k: number) => Number((k * step).toPrecision(12)) + 0
  const min = snap(Math.floor(low / step))
  const max = snap(Math.ceil(high / step))
  return { min, max, step, ticks: Math.round((max - min) / step), decimals }
}
