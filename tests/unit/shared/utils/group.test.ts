import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { Criterion } from '../../../../shared/types/decision'
import {
  geometricMeanWeights,
  groupStanding,
  groupWeights,
  meanWeights,
  medianWeights,
  weightDispersion,
} from '../../../../shared/utils/group'
import { analyseLedger } from '../../../../shared/utils/ledger'
import { weightedSumFavourite } from '../../../../shared/utils/scalarise'
import { efficientTable, matrixArb, weightsArb } from '../../../reference/ledgerFixtures'

const close = (xs: number[]) => xs.map(x => expect.closeTo(x, 12))

describe('group weights', () => {
  it.each<[string, (s: number[][], p: number) => Float64Array, number[][], number[]]>([
    ['mean of normalised vectors', meanWeights, [[2, 2], [1, 0]], [0.75, 0.25]],
    ['mean of opposite vectors', meanWeights, [[1, 0], [0, 1]], [0.5, 0.5]],
    // By hand: normalised (½, ½) and (¼, ¾); geometric means √⅛ and √⅜, ratio 1 : √3.
    ['geometric mean', geometricMeanWeights, [[1, 1], [1, 3]], [1 / (1 + Math.sqrt(3)), Math.sqrt(3) / (1 + Math.sqrt(3))]],
    ['geometric mean with a zero', geometricMeanWeights, [[1, 1, 0], [1, 3, 4]], [1 / (1 + Math.sqrt(3)), Math.sqrt(3) / (1 + Math.sqrt(3)), 0]],
    // By hand: normalised (1, 0, 0), (½, ½, 0), (½, ¼, ¼); medians (½, ¼, 0).
    ['median, odd count', medianWeights, [[1, 0, 0], [1, 1, 0], [2, 1, 1]], [2 / 3, 1 / 3, 0]],
    // By hand: first criterion 0, ½, ¾, 1 → 0.625; second 0, ¼, ½, 1 → 0.375.
    ['median, even count', medianWeights, [[1, 0], [0, 1], [1, 1], [3, 1]], [0.625, 0.375]],
  ])('%s', (_, rule, stakeholders, expected) => {
    expect(Array.from(rule(stakeholders, expected.length))).toEqual(close(expected))
  })

  it.each<[string, () => unknown, RegExp]>([
    ['no stakeholders', () => meanWeights([], 2), /No stakeholder/],
    ['a stakeholder with all-zero weights', () => meanWeights([[1, 1], [0, 0]], 2), /Stakeholder 2: All weights are zero/],
    ['a NaN weight', () => medianWeights([[1, Number.NaN]], 2), /Stakeholder 1: Weight 2 is not a number/],
    ['a wrong-length vector', () => geometricMeanWeights([[1, 1, 1]], 2), /Stakeholder 1: Expected 2 weights/],
    ['geometric means zero everywhere', () => geometricMeanWeights([[1, 0], [0, 1]], 2), /zero on every criterion/],
    ['medians zero everywhere', () => medianWeights([[1, 0, 0], [0, 1, 0], [0, 0, 1]], 3), /zero on every criterion/],
  ])('rejects %s with a RangeError', (_, run, message) => {
    expect(run).toThrow(RangeError)
    expect(run).toThrow(message)
  })

  it('groupWeights dispatches on the rule, mean by default', () => {
    const s = [[1, 2, 3], [3, 1, 1], [0, 1, 5]]
    expect(groupWeights(s, 3)).toEqual(meanWeights(s, 3))
    expect(groupWeights(s, 3, 'median')).toEqual(medianWeights(s, 3))
    expect(groupWeights(s, 3, 'geometric-mean')).toEqual(geometricMeanWeights(s, 3))
  })
})

describe('weightDispersion', () => {
  it.each([
    ['everyone agrees', [[1, 1], [2, 2]], [1, 1], 0],
    ['two opposite stakeholders', [[1, 0], [0, 1]], [1, 1], 0.5],
    ['disjoint from the group', [[1, 0, 0]], [0, 1, 1], 1],
  ])('%s', (_, stakeholders, group, expected) => {
    expect(weightDispersion(stakeholders, group)).toBeCloseTo(expected, 14)
  })
})

describe('unanimity', () => {
  it('property: the arithmetic mean keeps an alternative every stakeholder ranks first', () => {
    let unanimous = 0
    const caseArb = matrixArb({ minN: 1, maxN: 6, minP: 2, maxP: 4 }).chain(m => fc.tuple(
      fc.constant(m),
      fc.array(weightsArb(m.directions.length), { minLength: 1, maxLength: 5 }),
    ))
    fc.assert(fc.property(caseArb, ([{ directions, rows }, stakeholders]) => {
      const t = efficientTable(directions, rows)
      const shared = t.alternativeIds.filter(id =>
        stakeholders.every(w => weightedSumFavourite(t, w).winners.includes(id)))
      if (shared.length === 0) return
      unanimous++
      const group = weightedSumFavourite(t, meanWeights(stakeholders, directions.length)).winners
      for (const id of shared) expect(group).toContain(id)
    }), { numRuns: 300 })
    // The law must have been exercised, not passed vacuously.
    expect(unanimous).toBeGreaterThan(50)
  })

  const criteria = (p: number): Criterion[] =>
    Array.from({ length: p }, (_, k) => ({ id: `c${k}`, name: `Criterion ${k}`, unit: 'points', direction: 'max' as const }))
  const ledger = (rows: number[][]) => analyseLedger(
    criteria(rows[0]!.length),
    rows.map((row, i) => ({ id: `a${i}`, name: `Alternative ${i}`, scores: Object.fromEntries(row.map((x, k) => [`c${k}`, x])) })),
  )

  // Both counterexamples were found by a random search over small integer tables; the tests
  // recompute every winner from the data.
  it('the geometric mean can break unanimity (three criteria, three stakeholders)', () => {
    const analysis = ledger([[4, 1, 3], [2, 10, 6], [10, 3, 0]])
    const stakeholders = [[9, 8, 3], [7, 8, 3], [9, 2, 9]]
    expect(analysis.efficientIds).toEqual(['a0', 'a1', 'a2'])
    for (const w of stakeholders) expect(weightedSumFavourite(analysis, w).winners).toEqual(['a1'])
    expect(weightedSumFavourite(analysis, meanWeights(stakeholders, 3)).winners).toEqual(['a1'])
    expect(weightedSumFavourite(analysis, geometricMeanWeights(stakeholders, 3)).winners).not.toContain('a1')
  })

  it('the median can break unanimity (four criteria, three stakeholders)', () => {
    const analysis = ledger([[6, 6, 0, 10], [4, 9, 5, 8], [8, 7, 1, 7]])
    const stakeholders = [[7, 6, 5, 8], [9, 8, 4, 3], [9, 6, 7, 3]]
    expect(analysis.efficientIds).toEqual(['a0', 'a1', 'a2'])
    for (const w of stakeholders) expect(weightedSumFavourite(analysis, w).winners).toEqual(['a1'])
    expect(weightedSumFavourite(analysis, meanWeights(stakeholders, 4)).winners).toEqual(['a1'])
    expect(weightedSumFavourite(analysis, medianWeights(stakeholders, 4)).winners).not.toContain('a1')
  })
})

describe('groupStanding', () => {
  // Minimised; normalised a0 = (1, 0), a1 = (0, 1), a2 = (0.4, 0.4).
  const table = efficientTable(['min', 'min'], [[0, 10], [10, 0], [6, 6]])

  it('reports group weights, favourite, each stakeholder\'s winners, dispersion and agreement', () => {
    const standing = groupStanding(table, [[1, 0], [3, 1], [0, 1]])
    // By hand: mean of (1, 0), (¾, ¼), (0, 1) = (7/12, 5/12), so a0 scores 7/12 and wins.
    expect(standing.weights).toEqual(close([7 / 12, 5 / 12]))
    expect(standing.favourite.winners).toEqual(['a0'])
    expect(standing.stakeholderWinners).toEqual([['a0'], ['a0'], ['a1']])
    expect(standing.agreement).toBeCloseTo(2 / 3, 14)
    // TV distances 5/12, 1/6, 7/12 → mean 7/18.
    expect(standing.dispersion).toBeCloseTo(7 / 18, 14)
    expect(standing.rule).toBe('mean')
  })

  it('counts a stakeholder whose tie includes the group favourite as agreeing', () => {
    const standing = groupStanding(table, [[1, 1], [1, 0]])
    expect(standing.stakeholderWinners[0]).toEqual(['a0', 'a1'])
    expect(standing.favourite.winners).toEqual(['a0'])
    expect(standing.agreement).toBe(1)
  })

  it('an empty table gives no favourite and no agreement', () => {
    const empty = efficientTable(['min', 'min'], [])
    const standing = groupStanding(empty, [[1, 1]])
    expect(standing.favourite.winners).toEqual([])
    expect(standing.agreement).toBe(0)
  })
})
