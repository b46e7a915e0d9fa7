import { ALTERNATIVE_STATUSES, DIRECTIONS, type Alternative, type AlternativeStatus, type Criterion } from '../types/decision'
import type { AlternativeVerdict, LedgerAnalysis, LedgerError } from '../types/engine'
import { feasibilityOf } from './feasibility'
import { idealAndNadir, normaliseTable } from './normalise'
import { canonicalise, paretoSets } from './pareto'
import { SUPPORT_TOLERANCE, supportOf } from './supported'

/** Names compare equal when they match ignoring case, Unicode form and surrounding spaces. */
function nameKey(name: string): string {
  return name.normalize('NFC').trim().toLocaleLowerCase('en')
}

function label(name: unknown, kind: string, index: number): string {
  return typeof name === 'string' && name.trim() !== '' ? `"${name.trim()}"` : `${kind} ${index + 1}`
}

function describe(value: unknown): string {
  if (typeof value === 'number') return String(value)
  if (typeof value === 'string') return `the text ${JSON.stringify(value)}`
  return `a value of type ${value === null ? 'null' : typeof value}`
}

function isLimit(value: unknown): boolean {
  return value === null || value === undefined || (typeof value === 'number' && Number.isFinite(value))
}

/**
 * Every reason the ledger cannot be analysed, in reading order (criteria first, then each
 * alternative's own fields and scores); an empty array means it is valid. Nothing is coerced:
 * a score given as text, null, NaN or ±Infinity is an error, and so is a limit that is not a
 * finite number or null. Duplicate names are compared ignoring case, Unicode normal form and
 * surrounding spaces; the second and later holders of a duplicate id or name are reported.
 * No alternatives at all is valid (there is just nothing to narrow). O(n·p).
 */
export function validateLedger(criteria: readonly Criterion[], alternatives: readonly Alternative[]): LedgerError[] {
  const errors: LedgerError[] = []
  if (criteria.length === 0) {
    errors.push({ code: 'no-criteria', message: 'The table has no criteria; add at least one criterion to compare the alternatives on.' })
  }

  const criterionById = new Map<string, Criterion>()
  const criterionByName = new Map<string, Criterion>()
  criteria.forEach((criterion, criterionIndex) => {
    const name = label(criterion.name, 'criterion', criterionIndex)
    const at = { criterionIndex, criterionId: criterion.id, criterionName: criterion.name }
    const firstWithId = criterionById.get(criterion.id)
    if (firstWithId !== undefined) {
      errors.push({ code: 'criterion-id-duplicate', ...at, message: `Criterion ${name} has the same id (${criterion.id}) as criterion ${label(firstWithId.name, 'criterion', criteria.indexOf(firstWithId))}.` })
    }
    else criterionById.set(criterion.id, criterion)

    if (typeof criterion.name !== 'string' || criterion.name.trim() === '') {
      errors.push({ code: 'criterion-name-empty', ...at, message: `Criterion ${criterionIndex + 1} has no name.` })
    }
    else {
      const key = nameKey(criterion.name)
      if (criterionByName.has(key)) {
        errors.push({ code: 'criterion-name-duplicate', ...at, message: `Two criteria are called ${name}; give each criterion its own name.` })
      }
      else criterionByName.set(key, criterion)
    }

    if (!(DIRECTIONS as readonly unknown[]).includes(criterion.direction)) {
      errors.push({ code: 'criterion-direction-invalid', ...at, message: `Criterion ${name} must be either minimised or maximised, but its direction is ${describe(criterion.direction)}.` })
    }
    const limits = [['lowest', criterion.lowest], ['highest', criterion.highest]] as const
    for (const [kind, value] of limits) {
      if (!isLimit(value)) {
        errors.push({ code: 'criterion-limit-invalid', ...at, message: `The ${kind} acceptable value of ${name} must be a finite number or left empty, but it is ${describe(value)}.` })
      }
    }
    const { lowest, highest } = criterion
    if (isLimit(lowest) && isLimit(highest) && lowest != null && highest != null && lowest > highest) {
      errors.push({ code: 'criterion-limits-reversed', ...at, message: `The lowest acceptable value of ${name} (${lowest}) is above its highest (${highest}), so no alternative could be acceptable.` })
    }
  })

  const alternativeIds = new Map<string, number>()
  const alternativeNames = new Set<string>()
  alternatives.forEach((alternative, alternativeIndex) => {
    const name = label(alternative.name, 'alternative', alternativeIndex)
    const at = { alternativeIndex, alternativeId: alternative.id, alternativeName: alternative.name }
    const firstWithId = alternativeIds.get(alternative.id)
    if (firstWithId !== undefined) {
      errors.push({ code: 'alternative-id-duplicate', ...at, message: `Alternative ${name} has the same id (${alternative.id}) as alternative ${label(alternatives[firstWithId]!.name, 'alternative', firstWithId)}.` })
    }
    else alternativeIds.set(alternative.id, alternativeIndex)

    if (typeof alternative.name !== 'string' || alternative.name.trim() === '') {
      errors.push({ code: 'alternative-name-empty', ...at, message: `Alternative ${alternativeIndex + 1} has no name.` })
    }
    else {
      const key = nameKey(alternative.name)
      if (alternativeNames.has(key)) {
        errors.push({ code: 'alternative-name-duplicate', ...at, message: `Two alternatives are called ${name}; give each alternative its own name.` })
      }
      else alternativeNames.add(key)
    }

    const scores: Readonly<Record<string, unknown>> = alternative.scores ?? {}
    for (const [criterionId, criterion] of criterionById) {
      const where = { ...at, criterionId, criterionName: criterion.name }
      const criterionLabel = label(criterion.name, 'criterion', criteria.indexOf(criterion))
      const value = Object.hasOwn(scores, criterionId) ? scores[criterionId] : undefined
      if (value === undefined || value === null) {
        errors.push({ code: 'score-missing', ...where, message: `Alternative ${name} has no score for ${criterionLabel}.` })
      }
      else if (typeof value !== 'number' || Number.isNaN(value)) {
        errors.push({ code: 'score-not-a-number', ...where, message: `The score of ${name} for ${criterionLabel} is not a number (it is ${describe(value)}).` })
      }
      else if (!Number.isFinite(value)) {
        errors.push({ code: 'score-infinite', ...where, message: `The score of ${name} for ${criterionLabel} is infinite; enter a finite number.` })
      }
    }
    for (const key of Object.keys(scores)) {
      if (!criterionById.has(key)) {
        errors.push({ code: 'score-unknown-criterion', ...at, criterionId: key, criterionName: null, message: `Alternative ${name} has a score for "${key}", which is not a criterion of this table.` })
      }
    }
  })
  return errors
}

/** Thrown by `analyseLedger` on an invalid ledger; `errors` lists every problem found. */
export class LedgerInvalidError extends Error {
  readonly errors: LedgerError[]
  constructor(errors: LedgerError[]) {
    super(`The table cannot be analysed: ${errors.length} problem${errors.length === 1 ? '' : 's'} (first: ${errors[0]?.message ?? 'none'}).`)
    this.name = 'LedgerInvalidError'
    this.errors = errors
  }
}

export interface AnalyseOptions {
  /** Skip the support LPs (they cost one small LP per efficient alternative). Default true. */
  support?: boolean
  /** See SUPPORT_TOLERANCE. */
  supportTolerance?: number
}

/**
 * The full narrowing of a ledger. Throws `LedgerInvalidError` (carrying every validation error)
 * when `validateLedger` finds anything, so a returned analysis always rests on clean data.
 *
 * Per alternative, in ledger order: status ('infeasible' breaks a hard limit; among the feasible
 * ones dominance is exact, no tolerance: 'efficient', 'weakly-efficient' = dominated but with no
 * alternative strictly better on every criterion, 'dominated' = some alternative is strictly
 * better everywhere), the broken limits, for dominated ones an efficient dominator and the
 * criteria on which it is strictly better, the feasible alternatives with identical scores
 * (empty for infeasible ones, which take no further part), and for efficient ones whether a
 * weighted sum can pick them (LP, see `supportOf`; computed on the normalised efficient set).
 * Also: counts per status, ideal and nadir over the efficient set (null when nothing is
 * feasible), and the normalised efficient table that every favourite is drawn from.
 *
 * Cost: O(n·p) plus `paretoSets`, plus one LP with (efficient count) rows per efficient
 * alternative when `support` is on.
 */
export function analyseLedger(
  criteria: readonly Criterion[],
  alternatives: readonly Alternative[],
  options: AnalyseOptions = {},
): LedgerAnalysis {
  const errors = validateLedger(criteria, alternatives)
  if (errors.length > 0) throw new LedgerInvalidError(errors)

  const n = alternatives.length
  const p = criteria.length
  const criterionIds = criteria.map(c => c.id)
  const directions = criteria.map(c => c.direction)
  const raw = new Float64Array(n * p)
  alternatives.forEach((alternative, i) => {
    criteria.forEach((criterion, k) => {
      raw[i * p + k] = alternative.scores[criterion.id]!
    })
  })

  const { feasible, brokenLimits } = feasibilityOf(criteria, alternatives)
  const canon = canonicalise(raw, n, p, directions)
  const sets = paretoSets(canon, n, p, feasible)

  const efficientRows: number[] = []
  for (let i = 0; i < n; i++) if (sets.efficient[i] === 1) efficientRows.push(i)
  const range = idealAndNadir(raw, n, p, directions, sets.efficient)
  const efficientRaw = new Float64Array(efficientRows.length * p)
  efficientRows.forEach((row, r) => efficientRaw.set(raw.subarray(row * p, row * p + p), r * p))
  const normalised = normaliseTable(
    criterionIds,
    directions,
    efficientRows.map(i => alternatives[i]!.id),
    efficientRaw,
    range?.best ?? new Float64Array(p),
    range?.worst ?? new Float64Array(p),
  )

  const support = options.support === false
    ? null
    : efficientRows.map((_, r) => supportOf(normalised, r, options.supportTolerance ?? SUPPORT_TOLERANCE))
  const supportByRow = new Map(efficientRows.map((row, r) => [row, support?.[r] ?? null]))

  const twins = new Map<number, number[]>()
  for (let i = 0; i < n; i++) {
    const group = sets.duplicateOf[i]!
    if (group < 0) continue
    const members = twins.get(group)
    if (members === undefined) twins.set(group, [i])
    else members.push(i)
  }

  const counts = Object.fromEntries(ALTERNATIVE_STATUSES.map(s => [s, 0])) as Record<AlternativeStatus, number>
  const verdicts: AlternativeVerdict[] = alternatives.map((alternative, i) => {
    let status: AlternativeStatus
    if (feasible[i] !== 1) status = 'infeasible'
    else if (sets.efficient[i] === 1) status = 'efficient'
    else if (sets.weaklyEfficient[i] === 1) status = 'weakly-efficient'
    else status = 'dominated'
    counts[status]++

    const d = sets.dominator[i]!
    const worseOn: string[] = []
    if (d >= 0) {
      for (let k = 0; k < p; k++) if (canon[i * p + k]! > canon[d * p + k]!) worseOn.push(criterionIds[k]!)
    }
    const group = sets.duplicateOf[i]!
    const tiesWith = group < 0 ? [] : twins.get(group)!.filter(j => j !== i).map(j => alternatives[j]!.id)
    const verdict = supportByRow.get(i) ?? null
    return {
      id: alternative.id,
      name: alternative.name,
      status,
      brokenLimits: brokenLimits[i]!,
      dominatedBy: d >= 0 ? alternatives[d]!.id : null,
      worseOn,
      tiesWith,
      supported: verdict === null ? null : verdict.supported,
      supportWeights: verdict !== null && verdict.supported ? verdict.weights : null,
    }
  })

  const byCriterion = (values: Float64Array | undefined) =>
    values === undefined ? null : Object.fromEntries(criterionIds.map((id, k) => [id, values[k]!]))
  return {
    criteria,
    alternatives: verdicts,
    counts,
    efficientIds: efficientRows.map(i => alternatives[i]!.id),
    ideal: byCriterion(range?.best),
    nadir: byCriterion(range?.worst),
    normalised,
  }
}
