import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { Direction } from '../../../../shared/types/decision'
import { analyseLedger } from '../../../../shared/utils/ledger'
import { idealAndNadir, normaliseTable } from '../../../../shared/utils/normalise'
import { canonicalise, paretoSets } from '../../../../shared/utils/pareto'
import {
  normaliseWeights,
  rawWeightedSumRanking,
  referencePointFavourite,
  weightedSumFavourite,
  weightVector,
} from '../../../../shared/utils/scalarise'
import { supportOfAll } from '../../../../shared/utils/supported'
import { efficientTable, ledgerArb, matrixArb, weightsArb } from '../../../reference/ledgerFixtures'

describe('normaliseWeights', () => {
  it.each<[string, number[], number, RegExp]>([
    ['wrong length', [1, 2], 3, /Expected 3 weights/],
    ['NaN', [1, Number.NaN], 2, /Weight 2 is not a number/],
    ['Infinity', [Infinity, 1], 2, /Weight 1 is infinite/],
    ['negative', [1, -0.5], 2, /Weight 2 is negative/],
    ['all zero', [0, 0, 0], 3, /All weights are zero/],
    ['no criteria', [], 0, /All weights are zero/],
  ])('rejects %s with a RangeError', (_, weights, p, message) => {
    expect(() => normaliseWeights(weights, p)).toThrow(RangeError)
    expect(() => normaliseWeights(weights, p)).toThrow(message)
  })

  it.each([
    [[2, 2], [0.5, 0.5]],
    [[-0, 3], [0, 1]],
    [[1e308, 1e308], [0.5, 0.5]], // the plain sum would overflow
    [[1, 3], [0.25, 0.75]],
  ])('rescales %j to %j', (weights, expected) => {
    expect(Array.from(normaliseWeights(weights, weights.length))).toEqual(expected)
  })
})

describe('weightVector', () => {
  it('orders weights by criterion and rejects missing or unknown keys', () => {
    expect(weightVector(['a', 'b'], { b: 2, a: 1 })).toEqual([1, 2])
    expect(() => weightVector(['a', 'b'], { a: 1 })).toThrow(/No weight is given for criterion "b"/)
    expect(() => weightVector(['a'], { a: 1, z: 1 })).toThrow(/"z", which is not a criterion/)
  })
})

describe('rawWeightedSumRanking', () => {
  it('reproduces the weighted sum model example: A2 and A3 tie at 22, A1 scores 21.5', () => {
    // Triantaphyllou, "Multi-Criteria Decision Making Methods: A Comparative Study" (Kluwer,
    // 2000), weighted sum model example: three alternatives, four benefit criteria. The numbers
    // were recalled from memory by the lead, then checked against copies of the encyclopaedia
    // article "Weighted sum model", which cites that book and tabulates the same matrix, weights
    // and scores (21.50, 22.00, 22.00); the book itself was not consulted.
    const weights = [0.2, 0.15, 0.4, 0.25]
    const rows = [
      [25, 20, 15, 30], // A1
      [10, 30, 20, 30], // A2
      [30, 10, 30, 10], // A3
    ]
    const ranking = rawWeightedSumRanking(rows, weights)
    expect(ranking.scores[0]).toBeCloseTo(21.5, 12)
    expect(ranking.scores[1]).toBeCloseTo(22, 12)
    expect(ranking.scores[2]).toBeCloseTo(22, 12)
    expect(ranking.winners).toEqual([1, 2])
    expect(ranking.runnersUp).toEqual([0])
  })

  it('reports a tie that is exact in decimals even when binary rounding splits it', () => {
    // 0.1·3 = 0.3 = 0.3·1 exactly, but in doubles 0.1 * 3 is 0.30000000000000004.
    expect(0.1 * 3).not.toBe(0.3 * 1)
    expect(rawWeightedSumRanking([[3, 0], [0, 1]], [0.1, 0.3]).winners).toEqual([0, 1])
  })

  it('still separates scores that differ in the last decimal that matters', () => {
    expect(rawWeightedSumRanking([[3, 0], [0, 1.000000001]], [0.1, 0.3]).winners).toEqual([1])
  })

  it.each<[string, number[][], number[]]>([
    ['a row of the wrong length', [[1, 2, 3]], [0.5, 0.5]],
    ['a NaN score', [[1, Number.NaN]], [0.5, 0.5]],
    ['negative weights', [[1, 2]], [-1, 2]],
  ])('rejects %s', (_, rows, weights) => {
    expect(() => rawWeightedSumRanking(rows, weights)).toThrow(RangeError)
  })
})

describe('weightedSumFavourite', () => {
  // All minimised; a2 sits on the non-convex part of the front.
  const nonConvex = efficientTable(['min', 'min'], [[0, 10], [10, 0], [6, 6]])

  it('returns winner, runner-up, scores and the normalised weights', () => {
    const result = weightedSumFavourite(nonConvex, [3, 1])
    expect(result.winners).toEqual(['a0'])
    expect(result.runnersUp).toEqual(['a2'])
    expect(result.weights).toEqual([0.75, 0.25])
    // By hand: a0 = (1, 0) → 0.75; a1 = (0, 1) → 0.25; a2 = (0.4, 0.4) → 0.4.
    expect(result.scores[0]).toBeCloseTo(0.75, 14)
    expect(result.scores[1]).toBeCloseTo(0.25, 14)
    expect(result.scores[2]).toBeCloseTo(0.4, 14)
  })

  it('reports ties at the balancing weight', () => {
    expect(weightedSumFavourite(nonConvex, [1, 1]).winners).toEqual(['a0', 'a1'])
  })

  it.each([
    ['all zero', [0, 0]],
    ['NaN', [Number.NaN, 1]],
    ['negative', [-1, 2]],
    ['wrong length', [1, 1, 1]],
  ])('rejects %s weights with a RangeError', (_, weights) => {
    expect(() => weightedSumFavourite(nonConvex, weights)).toThrow(RangeError)
  })

  it.each<[string, Direction[], number[][], number[], string[]]>([
    ['one alternative', ['min', 'max'], [[4, 4]], [1, 2], ['a0']],
    ['all identical', ['min', 'max'], [[4, 4], [4, 4]], [1, 2], ['a0', 'a1']],
  ])('%s', (_, directions, rows, weights, winners) => {
    expect(weightedSumFavourite(efficientTable(directions, rows), weights).winners).toEqual(winners)
  })

  it('an empty table has no winner', () => {
    const empty = efficientTable(['min'], [])
    expect(weightedSumFavourite(empty, [1])).toMatchObject({ winners: [], runnersUp: [], scores: [] })
  })

  it('weight on a criterion with one efficient value changes nothing among efficient alternatives', () => {
    const t = efficientTable(['max', 'min', 'max'], [[1, 5, 9], [2, 5, 6], [3, 5, 1]])
    const base = weightedSumFavourite(t, [1, 0, 1])
    for (const w of [0.5, 1, 10, 100]) {
      const moved = weightedSumFavourite(t, [1, w, 1])
      expect(moved.winners).toEqual(base.winners)
      expect(moved.runnersUp).toEqual(base.runnersUp)
    }
  })

  it('property: the favourite is always efficient, supported, and a best score', () => {
    fc.assert(fc.property(
      ledgerArb({ minN: 1, maxN: 10 }).chain(l => fc.tuple(fc.constant(l), weightsArb(l.criteria.length))),
      ([{ criteria, alternatives }, weights]) => {
        const analysis = analyseLedger(criteria, alternatives)
        const result = weightedSumFavourite(analysis, weights)
        expect(result.winners.length > 0).toBe(analysis.efficientIds.length > 0)
        const best = Math.max(...result.scores)
        for (const id of result.winners) {
          const verdict = analysis.alternatives.find(a => a.id === id)!
          expect(verdict.status).toBe('efficient')
          expect(verdict.supported).toBe(true)
          expect(result.scores[analysis.normalised.alternativeIds.indexOf(id)]).toBeCloseTo(best, 12)
        }
      },
    ), { numRuns: 150 })
  })
})

describe('referencePointFavourite', () => {
  const nonConvex = efficientTable(['min', 'min'], [[0, 10], [10, 0], [6, 6]])

  it('picks the unsupported alternative that no weighted sum picks', () => {
    // Equal weights, reference = ideal (0, 0): Tchebycheff shortfalls by hand are
    // a0: max(0, ½·1) = 0.5, a1: 0.5, a2: max(½·0.6, ½·0.6) = 0.3.
    const result = referencePointFavourite(nonConvex, [1, 1])
    expect(result.winners).toEqual(['a2'])
    expect(result.runnersUp).toEqual(['a0', 'a1'])
    expect(result.scores[2]).toBeCloseTo(0.3, 14)
    expect(supportOfAll(nonConvex)[2]!.supported).toBe(false)
  })

  it.each<[string, number[], string]>([
    ['a balanced aspiration', [5, 5], 'a2'],
    ['an aspiration near a0', [0, 9], 'a0'],
    ['an aspiration near a1', [9, 0], 'a1'],
    ['an unattainable aspiration', [-5, -5], 'a2'],
  ])('with %s (criterion units) follows it', (_, aspiration, winner) => {
    expect(referencePointFavourite(nonConvex, [1, 1], aspiration).winners).toEqual([winner])
  })

  it('breaks a Tchebycheff tie against a merely weakly efficient alternative', () => {
    // Rows (0, 10) and (0, 12), both minimised: the second is weakly efficient only. With all
    // weight on the first criterion both have shortfall 0; the total shortfall separates them.
    // A weighted sum, by contrast, reports the tie it sees.
    const rows = [0, 10, 0, 12, 10, 0]
    const table = normaliseTable(['c0', 'c1'], ['min', 'min'], ['a0', 'a1', 'a2'], rows, [0, 0], [10, 12])
    expect(referencePointFavourite(table, [1, 0]).winners).toEqual(['a0'])
    expect(weightedSumFavourite(table, [1, 0]).winners).toEqual(['a0', 'a1'])
  })

  it('rejects a bad aspiration or bad weights', () => {
    expect(() => referencePointFavourite(nonConvex, [1, 1], [1])).toThrow(RangeError)
    expect(() => referencePointFavourite(nonConvex, [1, 1], [1, Number.NaN])).toThrow(RangeError)
    expect(() => referencePointFavourite(nonConvex, [0, 0])).toThrow(RangeError)
  })

  it('property: never picks a dominated or weakly efficient row, with or without aspiration', () => {
    const caseArb = matrixArb({ minN: 1, maxN: 10, minP: 1, maxP: 4 }).chain(m => fc.tuple(
      fc.constant(m),
      weightsArb(m.directions.length),
      fc.option(fc.array(fc.integer({ min: -3, max: 8 }), { minLength: m.directions.length, maxLength: m.directions.length }), { nil: undefined }),
    ))
    fc.assert(fc.property(caseArb, ([{ directions, rows }, weights, aspiration]) => {
      const n = rows.length
      const p = directions.length
      const raw = rows.flat()
      const sets = paretoSets(canonicalise(raw, n, p, directions), n, p)
      const range = idealAndNadir(raw, n, p, directions, sets.efficient)!
      // Every row in the table, dominated ones included, on the efficient set's scale.
      const table = normaliseTable(directions.map((_, k) => `c${k}`), directions, rows.map((_, i) => `a${i}`), raw, range.best, range.worst)
      const result = referencePointFavourite(table, weights, aspiration)
      expect(result.winners.length).toBeGreaterThan(0)
      for (const id of result.winners) expect(sets.efficient[Number(id.slice(1))]).toBe(1)
    }), { numRuns: 300 })
  })
})
