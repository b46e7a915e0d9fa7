import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { NormalisedTable } from '../../../../shared/types/engine'
import { normaliseWeights, weightedSumFavourite } from '../../../../shared/utils/scalarise'
import { weightStability } from '../../../../shared/utils/stability'
import { efficientTable, matrixArb, weightsArb } from '../../../reference/ledgerFixtures'

/** The weights along criterion k's path: w_k = s, the others rescaled as weightStability does. */
function along(w: Float64Array, k: number, s: number): number[] {
  const rest = w.reduce((sum, x, j) => (j === k ? sum : sum + x), 0)
  const others = w.length - 1
  return Array.from(w, (x, j) => (j === k ? s : (1 - s) * (rest > 0 ? x / rest : 1 / others)))
}

function winnersAt(table: NormalisedTable, weights: number[]): string[] {
  return weightedSumFavourite(table, weights).winners
}

describe('weightStability', () => {
  // Minimised; normalised a0 = (1, 0), a1 = (0, 1), a2 = (0.4, 0.4).
  const table = efficientTable(['min', 'min'], [[0, 10], [10, 0], [6, 6]])

  it('gives exact intervals and who takes over (worked by hand)', () => {
    // w = (¾, ¼): a0 wins. Along criterion 0, S_a0 = s, S_a1 = 1 − s, S_a2 = 0.4:
    // a0 holds while s ≥ ½ (a1 takes over below), up to 1. Along criterion 1 the mirror image.
    const result = weightStability(table, [3, 1])
    expect(result.favouriteId).toBe('a0')
    expect(result.weights).toEqual([0.75, 0.25])
    expect(result.intervals[0]).toMatchObject({ criterionId: 'c0', weight: 0.75, highest: 1, takenOverBelow: 'a1', takenOverAbove: null })
    expect(result.intervals[0]!.lowest).toBeCloseTo(0.5, 14)
    expect(result.intervals[1]).toMatchObject({ criterionId: 'c1', weight: 0.25, lowest: 0, takenOverBelow: null, takenOverAbove: 'a1' })
    expect(result.intervals[1]!.highest).toBeCloseTo(0.5, 14)
  })

  it('a favourite tied at the current weights holds only up to them on the rival\'s side', () => {
    const result = weightStability(table, [1, 1])
    expect(result.favouriteId).toBe('a0')
    expect(result.intervals[0]).toMatchObject({ lowest: 0.5, highest: 1, takenOverBelow: 'a1', takenOverAbove: null })
    const other = weightStability(table, [1, 1], 'a1')
    expect(other.intervals[0]).toMatchObject({ lowest: 0, highest: 0.5, takenOverBelow: null, takenOverAbove: 'a0' })
  })

  it('with all weight on one criterion, the others share what is moved equally', () => {
    const result = weightStability(table, [1, 0])
    expect(result.intervals[0]!.lowest).toBeCloseTo(0.5, 14)
    expect(result.intervals[0]!.takenOverBelow).toBe('a1')
    expect(result.intervals[1]!.highest).toBeCloseTo(0.5, 14)
  })

  it.each([
    ['one criterion', efficientTable(['max'], [[3], [1]]), [1]],
    ['one alternative', efficientTable(['min', 'max'], [[3, 1]]), [1, 2]],
    ['all identical', efficientTable(['min', 'max'], [[3, 1], [3, 1]]), [1, 2]],
  ])('%s: nothing ever takes over', (_, t, weights) => {
    for (const interval of weightStability(t, weights).intervals) {
      expect(interval).toMatchObject({ lowest: 0, highest: 1, takenOverBelow: null, takenOverAbove: null })
    }
  })

  it('a criterion with one efficient value moves nothing', () => {
    const t = efficientTable(['max', 'min', 'max'], [[1, 5, 9], [2, 5, 6], [3, 5, 1]])
    const interval = weightStability(t, [1, 1, 1]).intervals[1]!
    expect(interval).toMatchObject({ lowest: 0, highest: 1, takenOverBelow: null, takenOverAbove: null })
  })

  it.each([
    ['a favourite that does not win', () => weightStability(table, [3, 1], 'a1'), /not a weighted-sum winner/],
    ['an unknown favourite', () => weightStability(table, [3, 1], 'zz'), /not among the alternatives/],
    ['an empty table', () => weightStability(efficientTable(['min'], []), [1]), /no alternative/],
    ['all-zero weights', () => weightStability(table, [0, 0]), /All weights are zero/],
  ])('rejects %s with a RangeError', (_, run, message) => {
    expect(run).toThrow(RangeError)
    expect(run).toThrow(message)
  })

  it('property: the interval holds the current weight, the favourite wins inside it and loses just beyond', () => {
    const delta = 1e-7
    const caseArb = matrixArb({ minN: 1, maxN: 8, minP: 1, maxP: 4 }).chain(m =>
      fc.tuple(fc.constant(m), weightsArb(m.directions.length)))
    fc.assert(fc.property(caseArb, ([{ directions, rows }, weights]) => {
      const t = efficientTable(directions, rows)
      const w = normaliseWeights(weights, t.p)
      const result = weightStability(t, weights)
      const favourite = result.favouriteId
      result.intervals.forEach((interval, k) => {
        const { lowest, highest, weight } = interval
        expect(lowest).toBeGreaterThanOrEqual(0)
        expect(highest).toBeLessThanOrEqual(1)
        expect(lowest).toBeLessThanOrEqual(weight)
        expect(weight).toBeLessThanOrEqual(highest)
        for (const s of [lowest, (lowest + weight) / 2, (weight + highest) / 2, highest]) {
          if (t.p === 1 && s === 0) continue // no weighting at all: nothing to compare
          expect(winnersAt(t, along(w, k, s))).toContain(favourite)
        }
        if (interval.takenOverBelow !== null) {
          const beyond = winnersAt(t, along(w, k, lowest - delta))
          expect(beyond).toContain(interval.takenOverBelow)
          expect(beyond).not.toContain(favourite)
        }
        if (interval.takenOverAbove !== null) {
          const beyond = winnersAt(t, along(w, k, highest + delta))
          expect(beyond).toContain(interval.takenOverAbove)
          expect(beyond).not.toContain(favourite)
        }
        if (lowest > 0 && interval.takenOverBelow === null) expect.fail('an interval ending inside (0, 1) must name who takes over')
        if (highest < 1 && interval.takenOverAbove === null) expect.fail('an interval ending inside (0, 1) must name who takes over')
      })
    }), { numRuns: 400 })
  })
})
