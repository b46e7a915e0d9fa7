/**
 * Reference-point mode: a stakeholder sets a target level per criterion ("cost at most 12 £m,
 * at least 900 homes protected") instead of weights, and the achievement function names the
 * efficient alternative closest to those targets.
 *
 * Which weights: the achievement function of `referencePointFavourite` is called with equal
 * weights, on the normalised scale of the efficient set (0 = worst, 1 = best of the shortlist on
 * each criterion). So the favourite minimises the plain Tchebycheff shortfall
 *   max_k (r_k − v_ik)
 * from the target point r (normalised the same way), ties broken by the total shortfall
 * Σ_k (r_k − v_ik). The targets carry the stakeholder's priorities; extra weights would count
 * them twice. Equal weights are stored with each submission as "the weights used".
 *
 * Unlike a weighted sum this can name an efficient alternative that no weighting of sliders
 * favours (an unsupported one, lying inside the convex hull of the front).
 */
import { formatScore } from '../statusVocabulary'
import type { Criterion } from '../types/decision'
import type { LedgerAnalysis, ReferencePointFavourite } from '../types/engine'
import { referencePointFavourite } from './scalarise'

/** One criterion's scale for targets, all in the criterion's own unit. */
export interface AspirationScale {
  criterionId: string
  direction: Criterion['direction']
  /** Lowest and highest value among the efficient alternatives. */
  efficientLow: number
  efficientHigh: number
  /**
   * The accepted range: the efficient range widened by its own width on each side (a target a
   * little beyond the shortlist is a fair wish; one far beyond it is a slip of the finger). When
   * every efficient alternative has the same value, by max(1, |value|) on each side.
   */
  low: number
  high: number
  /** A slider step: one unit of the criterion's precision, or a round 1/100 of the range. */
  step: number
}

/** The achievement function's weights for `p` criteria: equal (see the note at the top). */
export function achievementWeights(p: number): number[] {
  return Array.from({ length: p }, () => 1 / p)
}

/** A round step near `x` (1, 2 or 5 times a power of ten); 1 for x ≤ 0 or non-finite. */
function roundStep(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) return 1
  const power = 10 ** Math.floor(Math.log10(x))
  const m = x / power
  return (m < 1.5 ? 1 : m < 3.5 ? 2 : m < 7.5 ? 5 : 10) * power
}

/**
 * The target scale of each criterion of an analysis, in criterion order (that of
 * `analysis.normalised.criterionIds`). Empty when nothing is efficient. O(p).
 */
export function aspirationScales(analysis: LedgerAnalysis): AspirationScale[] {
  const table = analysis.normalised
  if (table.n === 0) return []
  const byId = new Map(analysis.criteria.map(c => [c.id, c]))
  return table.criterionIds.map((id, k) => {
    const a = table.best[k]!
    const b = table.worst[k]!
    const efficientLow = Math.min(a, b)
    const efficientHigh = Math.max(a, b)
    const span = efficientHigh - efficientLow
    const margin = span > 0 ? span : Math.max(1, Math.abs(efficientLow))
    const precision = byId.get(id)?.precision
    const byPrecision = typeof precision === 'number' && precision >= 0 ? 10 ** -precision : null
    // The precision's unit, unless it would make a slider of more than 1,000 steps.
    const step = byPrecision !== null && span > 0 && span / byPrecision <= 1000 ? byPrecision : roundStep(span / 100)
    return { criterionId: id, direction: table.directions[k]!, efficientLow, efficientHigh, low: efficientLow - margin, high: efficientHigh + margin, step }
  })
}

/** What is wrong with a set of targets, and where (`criterionId` null for a wrong count). */
export interface AspirationProblem {
  criterionId: string | null
  message: string
}

/**
 * Checks targets against the analysis: one finite number per criterion, each within its
 * accepted range (`aspirationScales`). Returns the first problem, naming the criterion, or null
 * when they are fine. O(p).
 */
export function aspirationProblem(analysis: LedgerAnalysis, aspirations: readonly unknown[]): AspirationProblem | null {
  const scales = aspirationScales(analysis)
  const p = analysis.normalised.p
  if (scales.length === 0) return { criterionId: null, message: 'No alternative is efficient, so there is nothing to aim at.' }
  if (aspirations.length !== p) {
    return { criterionId: null, message: `Expected ${p} target${p === 1 ? '' : 's'} (one per criterion), got ${aspirations.length}.` }
  }
  const byId = new Map(analysis.criteria.map(c => [c.id, c]))
  for (let k = 0; k < p; k++) {
    const scale = scales[k]!
    const criterion = byId.get(scale.criterionId) ?? { id: scale.criterionId, name: scale.criterionId, unit: '', precision: null }
    const value = aspirations[k]
    if (typeof value !== 'number' || !Number.isFinite(value)) {
      return { criterionId: scale.criterionId, message: `The target for “${criterion.name}” is not a finite number.` }
    }
    if (value < scale.low || value > scale.high) {
      const shown = (x: number) => formatScore(x, { unit: criterion.unit, precision: null })
      return {
        criterionId: scale.criterionId,
        message: `The target for “${criterion.name}” (${shown(value)}) is outside the accepted range ${shown(scale.low)} to ${shown(scale.high)}; the shortlist spans ${shown(scale.efficientLow)} to ${shown(scale.efficientHigh)}.`,
      }
    }
  }
  return null
}

/**
 * The favourite for a set of targets (criterion units, criterion order): the achievement
 * function with equal weights. Throws a RangeError for a wrong count or a non-finite target
 * (as `referencePointFavourite`); range is not checked here (see `aspirationProblem`). O(n·p).
 */
export function aspirationFavourite(analysis: LedgerAnalysis, aspirations: ArrayLike<number>): ReferencePointFavourite {
  return referencePointFavourite(analysis, achievementWeights(analysis.normalised.p), aspirations)
}

/**
 * The group's target point: the median of each criterion's targets over the stakeholders (the
 * mean of the two middle ones for an even count). A median per criterion resists one extreme
 * target and stays in the range the stakeholders set. Throws a RangeError with no points or a
 * point of the wrong length. O(m log m · p).
 */
export function medianAspiration(points: readonly (readonly number[])[], p: number): number[] {
  if (points.length === 0) throw new RangeError('No targets to combine.')
  points.forEach((point, i) => {
    if (point.length !== p) throw new RangeError(`Target set ${i + 1} has ${point.length} values; expected ${p}.`)
  })
  return Array.from({ length: p }, (_, k) => {
    const sorted = points.map(point => point[k]!).sort((a, b) => a - b)
    const mid = sorted.length >> 1
    return sorted.length % 2 === 1 ? sorted[mid]! : (sorted[mid - 1]! + sorted[mid]!) / 2
  })
}

/**
 * Which of `ids` are efficient but unsupported (no weighting of sliders can favour them), by the
 * analysis' verdicts. Where support was not worked out (`supported` null: the phone, which takes
 * the flags from the server's ledger view instead of shipping an LP solver, or a front above
 * SUPPORT_CHECK_MAX_FRONT) nothing is claimed.
 */
export function unsupportedAmong(analysis: LedgerAnalysis, ids: readonly string[]): string[] {
  return ids.filter(id => analysis.alternatives.find(v => v.id === id)?.supported === false)
}

/** "at most 12.0 £m" (lower is better) or "at least 900 homes" (higher is better). */
export function aspirationWords(criterion: Pick<Criterion, 'direction' | 'unit' | 'precision'>, level: number): string {
  return `${criterion.direction === 'min' ? 'at most' : 'at least'} ${formatScore(level, criterion)}`
}
