import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { Direction } from '../../../../shared/types/decision'
import {
  idealAndNadir,
  normalisationError,
  normaliseScores,
  normaliseTable,
  normaliseValue,
} from '../../../../shared/utils/normalise'
import { canonicalise, paretoSets } from '../../../../shared/utils/pareto'
import { efficientTable, matrixArb } from '../../../reference/ledgerFixtures'

/** A double as an exact fraction num/den with den a power of two. */
function exactFraction(x: number): [bigint, bigint] {
  let k = 0
  while (!Number.isInteger(x * 2 ** k)) k++
  return [BigInt(x * 2 ** k), 2n ** BigInt(k)]
}

describe('idealAndNadir', () => {
  it('takes the best and worst of the selected rows, by direction', () => {
    const values = [
      1, 10, //
      3, 30, //
      2, 90, // not selected
    ]
    const range = idealAndNadir(values, 3, 2, ['min', 'max'], [1, 1, 0])!
    expect(Array.from(range.best)).toEqual([1, 30])
    expect(Array.from(range.worst)).toEqual([3, 10])
  })

  it('is null when no row is selected', () => {
    expect(idealAndNadir([1, 2], 2, 1, ['min'], [0, 0])).toBeNull()
    expect(idealAndNadir([], 0, 3, ['min', 'min', 'min'], [])).toBeNull()
  })
})

describe('normaliseValue', () => {
  it.each<[string, number, number, number, Direction, number]>([
    ['a minimised ideal', 10, 10, 50, 'min', 1],
    ['a minimised nadir', 50, 10, 50, 'min', 0],
    ['a minimised midpoint', 20, 10, 50, 'min', 0.75],
    ['a maximised ideal', 8, 8, 2, 'max', 1],
    ['a maximised value', 5, 8, 2, 'max', 0.5],
    ['worse than the nadir: below 0, not clamped', 70, 10, 50, 'min', -0.5],
    ['better than the ideal: above 1, not clamped', 0, 10, 50, 'min', 1.25],
    ['huge magnitudes: no overflow', 0, 1.7e308, -1.7e308, 'max', 0.5],
    ['no scale, at the ideal', 5, 5, 5, 'max', 1],
    ['no scale, better than the ideal', 6, 5, 5, 'max', 1],
    ['no scale, worse than the ideal', 4, 5, 5, 'max', 0],
  ])('%s', (_, x, best, worst, direction, expected) => {
    expect(normaliseValue(x, best, worst, direction)).toBeCloseTo(expected, 14)
  })

  it('passes NaN through', () => {
    expect(normaliseValue(Number.NaN, 1, 2, 'min')).toBeNaN()
    expect(normaliseValue(Number.NaN, 1, 1, 'min')).toBeNaN()
  })

  it('property: the rounding bound holds against exact arithmetic on decimal inputs', () => {
    // Inputs are decimals X/10^d that binary cannot hold exactly; the exact normalised value is
    // the rational (X − W)/(B − W). The computed double must lie within normalisationError of it.
    const decimals = fc.record({
      x: fc.integer({ min: -1e7, max: 1e7 }),
      b: fc.integer({ min: -1e7, max: 1e7 }),
      w: fc.integer({ min: -1e7, max: 1e7 }),
      d: fc.integer({ min: 0, max: 4 }),
    }).filter(({ b, w }) => b !== w)
    fc.assert(fc.property(decimals, ({ x, b, w, d }) => {
      const scale = 10 ** d
      const direction: Direction = b < w ? 'min' : 'max'
      const v = normaliseValue(x / scale, b / scale, w / scale, direction)
      const bound = normalisationError(x / scale, b / scale, w / scale, direction)
      const [vn, vd] = exactFraction(v)
      const [en, ed] = exactFraction(bound)
      // |vn/vd − (x − w)/(b − w)| ≤ en/ed, cross-multiplied with positive denominators.
      const num = BigInt(x - w)
      const den = BigInt(b - w)
      const sign = den < 0n ? -1n : 1n
      const gap = (vn * den - num * vd) * sign // = (v − exact)·|den|·vd
      const abs = gap < 0n ? -gap : gap
      expect(abs * ed <= en * vd * den * sign).toBe(true)
    }), { numRuns: 500 })
  })
})

describe('normaliseTable', () => {
  it('property: over the efficient set the ideal maps to 1, the nadir to 0, all within [0, 1], order kept', () => {
    fc.assert(fc.property(matrixArb({ minN: 1, maxN: 12 }), ({ directions, rows }) => {
      const t = efficientTable(directions, rows)
      const { n, p, values } = t
      for (let k = 0; k < p; k++) {
        const column = Array.from({ length: n }, (_, i) => values[i * p + k]!)
        expect(Math.max(...column)).toBe(1)
        if (t.best[k] !== t.worst[k]) expect(Math.min(...column)).toBe(0)
        for (const v of column) {
          expect(v).toBeGreaterThanOrEqual(0)
          expect(v).toBeLessThanOrEqual(1)
        }
        for (let i = 0; i < n; i++) {
          for (let j = 0; j < n; j++) {
            const xi = rows[Number(t.alternativeIds[i]!.slice(1))]![k]!
            const xj = rows[Number(t.alternativeIds[j]!.slice(1))]![k]!
            const better = directions[k] === 'min' ? xi < xj : xi > xj
            if (better) expect(values[i * p + k]!).toBeGreaterThan(values[j * p + k]!)
          }
        }
      }
    }))
  })

  it('normalises any alternative on the same scale, dominated ones outside [0, 1]', () => {
    const rows = [[0, 10], [10, 0], [12, 12]]
    const t = efficientTable(['min', 'min'], rows)
    expect(t.alternativeIds).toEqual(['a0', 'a1'])
    expect(normaliseScores(t, { c0: 12, c1: 12 })).toEqual([-0.2, -0.2].map(x => expect.closeTo(x, 14)))
    expect(() => normaliseScores(t, { c0: 1 })).toThrow(RangeError)
  })

  it('rejects shapes that disagree', () => {
    expect(() => normaliseTable(['c0'], ['min'], ['a0'], [1, 2], [0], [1])).toThrow(RangeError)
  })

  it('gives a criterion with one efficient value 1 for every efficient alternative', () => {
    const rows = [[1, 5], [2, 5], [0, 5]]
    const raw = rows.flat()
    const directions: Direction[] = ['max', 'min']
    const sets = paretoSets(canonicalise(raw, 3, 2, directions), 3, 2)
    expect(Array.from(sets.efficient)).toEqual([0, 1, 0])
    const t = efficientTable(directions, rows)
    expect(t.values[1]).toBe(1)
    expect(t.valueError[1]).toBe(0)
  })
})
