import type { Alternative, Criterion } from '../types/decision'
import type { BrokenLimit } from '../types/engine'

/**
 * The hard limits one alternative breaks, in criterion order, lowest before highest.
 * Limits are inclusive: a score equal to a limit is within it. A null or absent limit is no limit.
 * Expects a validated ledger (finite scores, limits in order); a missing score breaks nothing here.
 */
export function brokenLimitsOf(criteria: readonly Criterion[], alternative: Alternative): BrokenLimit[] {
  const broken: BrokenLimit[] = []
  for (const criterion of criteria) {
    const value = alternative.scores[criterion.id]
    if (value === undefined) continue
    const { lowest, highest } = criterion
    if (lowest != null && value < lowest) {
      broken.push({ criterionId: criterion.id, limit: 'lowest', limitValue: lowest, value })
    }
    if (highest != null && value > highest) {
      broken.push({ criterionId: criterion.id, limit: 'highest', limitValue: highest, value })
    }
  }
  return broken
}

/** Feasibility of every alternative: `feasible[i]` is 1 when alternative i breaks no limit. */
export interface Feasibility {
  feasible: Uint8Array
  brokenLimits: BrokenLimit[][]
}

/**
 * Which alternatives break a hard limit, and which limits (see `brokenLimitsOf`).
 * Empty input gives empty arrays. O(n·p).
 */
export function feasibilityOf(criteria: readonly Criterion[], alternatives: readonly Alternative[]): Feasibility {
  const feasible = new Uint8Array(alternatives.length)
  const brokenLimits = alternatives.map((alternative, i) => {
    const broken = brokenLimitsOf(criteria, alternative)
    feasible[i] = broken.length === 0 ? 1 : 0
    return broken
  })
  return { feasible, brokenLimits }
}
