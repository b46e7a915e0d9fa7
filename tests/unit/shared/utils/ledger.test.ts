import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { Alternative, Criterion } from '../../../../shared/types/decision'
import type { LedgerErrorCode } from '../../../../shared/types/engine'
import { analyseLedger, LedgerInvalidError, validateLedger } from '../../../../shared/utils/ledger'
import { canonicalise, dominates, paretoSetsReference } from '../../../../shared/utils/pareto'
import { weightedSumFavourite } from '../../../../shared/utils/scalarise'
import { ledgerArb, ledgerOf } from '../../../reference/ledgerFixtures'

const cost: Criterion = { id: 'cost', name: 'Cost', unit: 'M€', direction: 'min', highest: 100 }
const homes: Criterion = { id: 'homes', name: 'Homes protected', unit: 'homes', direction: 'max', lowest: 50 }
const delay: Criterion = { id: 'delay', name: 'Delay', unit: 'months', direction: 'min' }

function alt(id: string, scores: Record<string, unknown>, name = id): Alternative {
  return { id, name, scores: scores as Record<string, number> }
}

describe('validateLedger', () => {
  const ok = alt('a', { cost: 1, homes: 60, delay: 2 })

  it.each<[string, Criterion[], Alternative[], LedgerErrorCode[]]>([
    ['a valid ledger', [cost, homes, delay], [ok], []],
    ['no alternatives at all', [cost], [], []],
    ['zero criteria', [], [alt('a', {})], ['no-criteria']],
    ['a missing score', [cost, homes], [alt('a', { cost: 1 })], ['score-missing']],
    ['a null score', [cost], [alt('a', { cost: null })], ['score-missing']],
    ['a NaN score', [cost], [alt('a', { cost: Number.NaN })], ['score-not-a-number']],
    ['a score given as text', [cost], [alt('a', { cost: '3' })], ['score-not-a-number']],
    ['+Infinity', [cost], [alt('a', { cost: Infinity })], ['score-infinite']],
    ['-Infinity', [cost], [alt('a', { cost: -Infinity })], ['score-infinite']],
    ['a score for an unknown criterion', [cost], [alt('a', { cost: 1, colour: 2 })], ['score-unknown-criterion']],
    ['duplicate criterion ids', [cost, { ...delay, id: 'cost' }], [alt('a', { cost: 1 })], ['criterion-id-duplicate']],
    ['duplicate criterion names (case, spaces)', [cost, { ...delay, name: '  cOST ' }], [alt('a', { cost: 1, delay: 1 })], ['criterion-name-duplicate']],
    ['duplicate alternative ids', [cost], [alt('a', { cost: 1 }, 'One'), alt('a', { cost: 2 }, 'Two')], ['alternative-id-duplicate']],
    ['duplicate alternative names', [cost], [alt('a', { cost: 1 }, 'Levee'), alt('b', { cost: 2 }, ' levee')], ['alternative-name-duplicate']],
    ['an empty criterion name', [{ ...cost, name: '   ' }], [alt('a', { cost: 1 })], ['criterion-name-empty']],
    ['an empty alternative name', [cost], [alt('a', { cost: 1 }, '')], ['alternative-name-empty']],
    ['lowest above highest', [{ ...delay, lowest: 5, highest: 4 }], [alt('a', { delay: 4 })], ['criterion-limits-reversed']],
    ['a NaN limit', [{ ...delay, lowest: Number.NaN }], [alt('a', { delay: 4 })], ['criterion-limit-invalid']],
    ['a bad direction', [{ ...delay, direction: 'maximise' as never }], [alt('a', { delay: 4 })], ['criterion-direction-invalid']],
    // An inherited property must not pass for a score.
    ['a criterion id that is an Object.prototype key', [{ ...delay, id: 'constructor' }], [alt('a', {})], ['score-missing']],
  ])('%s', (_, criteria, alternatives, codes) => {
    expect(validateLedger(criteria, alternatives).map(e => e.code)).toEqual(codes)
  })

  it('accepts equal lowest and highest limits', () => {
    expect(validateLedger([{ ...delay, lowest: 4, highest: 4 }], [alt('a', { delay: 4 })])).toEqual([])
  })

  it('reports every error, with ids, names and a plain message', () => {
    const errors = validateLedger(
      [cost, { ...homes, name: 'cost' }],
      [alt('a', { cost: Number.NaN }, 'Levee'), alt('b', { cost: 1, homes: 60, extra: 1 }, 'Pumps')],
    )
    expect(errors.map(e => e.code)).toEqual([
      'criterion-name-duplicate',
      'score-not-a-number',
      'score-missing',
      'score-unknown-criterion',
    ])
    expect(errors[1]).toMatchObject({ alternativeId: 'a', alternativeName: 'Levee', criterionId: 'cost', criterionName: 'Cost' })
    expect(errors[1]!.message).toBe('The score of "Levee" for "Cost" is not a number (it is NaN).')
    expect(errors[2]).toMatchObject({ alternativeId: 'a', criterionId: 'homes' })
    expect(errors[3]).toMatchObject({ alternativeId: 'b', criterionId: 'extra', criterionName: null })
  })
})

describe('analyseLedger', () => {
  // A hand-made flood-protection table; every expectation below was worked out by hand.
  const criteria = [cost, homes, delay]
  const alternatives = [
    alt('levee', { cost: 60, homes: 900, delay: 24 }),
    alt('pumps', { cost: 40, homes: 700, delay: 12 }),
    alt('wetland', { cost: 30, homes: 600, delay: 30 }),
    alt('causeway', { cost: 100, homes: 950, delay: 40 }), // exactly at the cost limit: feasible
    alt('levee-slow', { cost: 60, homes: 900, delay: 30 }), // levee, but slower: weakly efficient
    alt('sandbags', { cost: 70, homes: 500, delay: 36 }), // levee is better everywhere
    alt('dam', { cost: 150, homes: 2000, delay: 48 }), // over the cost limit
    alt('barrier', { cost: 10, homes: 40, delay: 6 }), // under the homes limit; would dominate pumps and wetland
    alt('pumps-again', { cost: 40, homes: 700, delay: 12 }),
  ]
  const analysis = analyseLedger(criteria, alternatives)
  const verdict = (id: string) => analysis.alternatives.find(a => a.id === id)!

  it.each([
    ['levee', 'efficient'],
    ['pumps', 'efficient'],
    ['wetland', 'efficient'],
    ['causeway', 'efficient'],
    ['levee-slow', 'weakly-efficient'],
    ['sandbags', 'dominated'],
    ['dam', 'infeasible'],
    ['barrier', 'infeasible'],
    ['pumps-again', 'efficient'],
  ])('%s is %s', (id, status) => {
    expect(verdict(id).status).toBe(status)
  })

  it('counts statuses and lists the efficient set', () => {
    expect(analysis.counts).toEqual({ 'infeasible': 2, 'dominated': 1, 'weakly-efficient': 1, 'efficient': 5 })
    expect(analysis.efficientIds).toEqual(['levee', 'pumps', 'wetland', 'causeway', 'pumps-again'])
  })

  it('names the dominator and the criteria where the pruned alternative is worse', () => {
    expect(verdict('levee-slow')).toMatchObject({ dominatedBy: 'levee', worseOn: ['delay'] })
    expect(verdict('sandbags')).toMatchObject({ dominatedBy: 'levee', worseOn: ['cost', 'homes', 'delay'] })
    expect(verdict('levee')).toMatchObject({ dominatedBy: null, worseOn: [] })
  })

  it('lists broken limits, inclusive at the limit', () => {
    expect(verdict('dam').brokenLimits).toEqual([{ criterionId: 'cost', limit: 'highest', limitValue: 100, value: 150 }])
    expect(verdict('barrier').brokenLimits).toEqual([{ criterionId: 'homes', limit: 'lowest', limitValue: 50, value: 40 }])
    expect(verdict('causeway').brokenLimits).toEqual([])
  })

  it('reports identical alternatives as ties of each other', () => {
    expect(verdict('pumps').tiesWith).toEqual(['pumps-again'])
    expect(verdict('pumps-again').tiesWith).toEqual(['pumps'])
    expect(verdict('levee').tiesWith).toEqual([])
  })

  it('gives ideal and nadir over the efficient set only', () => {
    expect(analysis.ideal).toEqual({ cost: 30, homes: 950, delay: 12 })
    expect(analysis.nadir).toEqual({ cost: 100, homes: 600, delay: 40 })
  })

  it('marks support for efficient alternatives only, with a weighting under which each wins', () => {
    for (const v of analysis.alternatives) {
      if (v.status !== 'efficient') {
        expect(v.supported).toBeNull()
        continue
      }
      expect(v.supported).toBe(true)
      expect(weightedSumFavourite(analysis, v.supportWeights!).winners).toContain(v.id)
    }
  })

  it('throws LedgerInvalidError carrying every validation error', () => {
    const bad = () => analyseLedger([cost], [alt('a', { cost: Number.NaN }), alt('a', { cost: 1 })])
    expect(bad).toThrow(LedgerInvalidError)
    try {
      bad()
    }
    catch (error) {
      expect((error as LedgerInvalidError).errors.map(e => e.code)).toEqual(['score-not-a-number', 'alternative-id-duplicate', 'alternative-name-duplicate'])
    }
  })

  it.each([
    ['no alternatives', [] as number[][], { efficient: 0 }, null],
    ['one alternative', [[3, 4]], { efficient: 1 }, { c0: 3, c1: 4 }],
    ['all identical', [[2, 2], [2, 2], [2, 2]], { efficient: 3 }, { c0: 2, c1: 2 }],
    ['a criterion with all-equal values', [[1, 5], [2, 5], [3, 5]], { 'efficient': 1, 'weakly-efficient': 2 }, { c0: 1, c1: 5 }],
  ])('edge case: %s', (_, rows, counts, ideal) => {
    const ledger = ledgerOf(['min', 'min'], rows)
    const result = analyseLedger(ledger.criteria, ledger.alternatives)
    expect(result.counts).toEqual({ 'infeasible': 0, 'dominated': 0, 'weakly-efficient': 0, ...counts })
    expect(result.ideal).toEqual(ideal)
    for (const v of result.alternatives) if (v.status === 'efficient') expect(v.supported).toBe(true)
  })

  it('with every alternative infeasible, nothing is efficient and there is no ideal point', () => {
    const ledger = ledgerOf(['min'], [[5], [6]], [{ highest: 4 }])
    const result = analyseLedger(ledger.criteria, ledger.alternatives)
    expect(result.counts.infeasible).toBe(2)
    expect(result.ideal).toBeNull()
    expect(result.normalised.n).toBe(0)
  })

  it('property: efficient ⊆ weakly efficient ⊆ feasible, and statuses match the definitions', () => {
    fc.assert(fc.property(ledgerArb({ maxN: 10 }), ({ criteria, alternatives }) => {
      const result = analyseLedger(criteria, alternatives, { support: false })
      const n = alternatives.length
      const p = criteria.length
      const raw = alternatives.flatMap(a => criteria.map(c => a.scores[c.id]!))
      const canon = canonicalise(raw, n, p, criteria.map(c => c.direction))
      const feasible = Uint8Array.from(alternatives, a =>
        criteria.every(c => (c.lowest == null || a.scores[c.id]! >= c.lowest) && (c.highest == null || a.scores[c.id]! <= c.highest)) ? 1 : 0)
      const reference = paretoSetsReference(canon, n, p, feasible)
      result.alternatives.forEach((v, i) => {
        const isFeasible = v.status !== 'infeasible'
        const weakly = v.status === 'weakly-efficient' || v.status === 'efficient'
        expect(isFeasible).toBe(feasible[i] === 1)
        expect(v.status === 'efficient').toBe(reference.efficient[i] === 1)
        expect(weakly).toBe(reference.weaklyEfficient[i] === 1)
        if (v.status === 'efficient') expect(weakly && isFeasible).toBe(true)
        if (v.dominatedBy !== null) {
          const d = alternatives.findIndex(a => a.id === v.dominatedBy)
          expect(result.alternatives[d]!.status).toBe('efficient')
          expect(dominates(canon, p, d, i)).toBe(true)
          const strictlyWorse = criteria.filter((_, k) => canon[i * p + k]! > canon[d * p + k]!).map(c => c.id)
          expect(v.worseOn).toEqual(strictlyWorse)
        }
        else {
          expect(v.status === 'dominated' || v.status === 'weakly-efficient').toBe(false)
        }
        for (const twin of v.tiesWith) {
          const j = alternatives.findIndex(a => a.id === twin)
          expect(criteria.every(c => alternatives[j]!.scores[c.id] === alternatives[i]!.scores[c.id])).toBe(true)
        }
      })
      const total = Object.values(result.counts).reduce((a, b) => a + b, 0)
      expect(total).toBe(n)
    }))
  })
})
