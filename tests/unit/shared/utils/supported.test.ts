import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { Direction } from '../../../../shared/types/decision'
import { canonicalise, paretoSets } from '../../../../shared/utils/pareto'
import { weightedSumFavourite, weightedSumScores } from '../../../../shared/utils/scalarise'
import { SUPPORT_TOLERANCE, supportOf, supportOfAll, supportedOnPlane } from '../../../../shared/utils/supported'
import { requireGlpsol, solveExactly, supportLp } from '../../../reference/glpk'
import { efficientTable, matrixArb } from '../../../reference/ledgerFixtures'

/** Exact p = 2 verdicts for the efficient rows of a matrix, in table order. */
function geometricVerdicts(directions: readonly Direction[], rows: readonly (readonly number[])[]): boolean[] {
  const n = rows.length
  const canon = canonicalise(rows.flat(), n, 2, directions)
  const sets = paretoSets(canon, n, 2)
  const efficient = rows.map((_, i) => i).filter(i => sets.efficient[i] === 1)
  return Array.from(supportedOnPlane(canon, efficient), x => x === 1)
}

describe('supportOf', () => {
  // Hand-made: C sits on the non-convex part of the front (above the segment A–B).
  const rows = [[0, 10], [10, 0], [6, 6]]
  const table = efficientTable(['min', 'min'], rows)

  it('finds the non-convex point efficient but unsupported, the ends supported', () => {
    expect(table.alternativeIds).toEqual(['a0', 'a1', 'a2'])
    expect(supportOfAll(table).map(v => v.supported)).toEqual([true, true, false])
    // By hand: normalised A = (1, 0), B = (0, 1), C = (0.4, 0.4); the best worst-case lead of C
    // is at w = (½, ½): min(−0.6·½ + 0.4·½, 0.4·½ − 0.6·½) = −0.1.
    expect(supportOf(table, 2).margin).toBeCloseTo(-0.1, 7)
  })

  it('no weighting on a fine grid makes the unsupported point a winner', () => {
    for (let step = 0; step <= 1000; step++) {
      const w = step / 1000
      expect(weightedSumFavourite(table, [w, 1 - w]).winners).not.toContain('a2')
    }
  })

  it('counts a point exactly on the segment as supported: it ties at the supporting weight', () => {
    const collinear = efficientTable(['min', 'min'], [[0, 10], [10, 0], [5, 5]])
    const verdict = supportOf(collinear, 2)
    expect(verdict.supported).toBe(true)
    expect(Math.abs(verdict.margin)).toBeLessThanOrEqual(SUPPORT_TOLERANCE)
    expect(weightedSumFavourite(collinear, [1, 1]).winners).toEqual(['a0', 'a1', 'a2'])
  })

  it.each<[string, Direction[], number[][]]>([
    ['a single alternative', ['min', 'max'], [[3, 4]]],
    ['all identical', ['min', 'max'], [[3, 4], [3, 4], [3, 4]]],
    ['one criterion', ['max'], [[7], [2], [7]]],
    ['a criterion with all-equal values', ['min', 'min', 'max'], [[1, 5, 0], [2, 5, 3], [0, 5, -1]]],
  ])('%s: every efficient alternative is supported', (_, directions, data) => {
    const t = efficientTable(directions, data)
    expect(t.n).toBeGreaterThan(0)
    for (const verdict of supportOfAll(t)) expect(verdict.supported).toBe(true)
  })

  it('rejects a row outside the table', () => {
    expect(() => supportOf(table, 3)).toThrow(RangeError)
  })

  it('property: LP and the exact convex-hull test agree for two criteria', () => {
    fc.assert(fc.property(matrixArb({ minN: 1, maxN: 14, minP: 2, maxP: 2, grid: 12 }), ({ directions, rows }) => {
      const t = efficientTable(directions, rows)
      expect(supportOfAll(t).map(v => v.supported)).toEqual(geometricVerdicts(directions, rows))
    }), { numRuns: 300 })
  })

  it('property: at the witness weights a supported alternative scores within tolerance of the best', () => {
    fc.assert(fc.property(matrixArb({ minN: 1, maxN: 10, minP: 2, maxP: 4 }), ({ directions, rows }) => {
      const t = efficientTable(directions, rows)
      supportOfAll(t).forEach((verdict, i) => {
        if (!verdict.supported) return
        const { scores } = weightedSumScores(t, verdict.weights)
        expect(scores[i]!).toBeGreaterThanOrEqual(Math.max(...scores) - 2 * SUPPORT_TOLERANCE)
      })
    }), { numRuns: 150 })
  })
})

describe('published fronts with analytically known support', () => {
  // Zitzler, Deb & Thiele, "Comparison of Multiobjective Evolutionary Algorithms: Empirical
  // Results", Evolutionary Computation 8(2), 2000. Pareto-optimal fronts (g = 1), both minimised:
  // ZDT1 f2 = 1 − √f1 (convex), ZDT2 f2 = 1 − f1² (non-convex). Definitions checked against the
  // R package smoof's documentation of makeZDT1Function/makeZDT2Function, which cites the paper.
  // On a strictly convex front every point is supported; on a strictly concave one only the two
  // ends are (a weighted sum of a concave function of f1 is minimised at an end of [0, 1]).
  const f1 = Array.from({ length: 11 }, (_, i) => i / 10)
  const zdt1 = f1.map(x => [x, 1 - Math.sqrt(x)])
  const zdt2 = f1.map(x => [x, 1 - x * x])

  it('ZDT1 (convex): every sampled front point is supported', () => {
    const t = efficientTable(['min', 'min'], zdt1)
    expect(t.n).toBe(11)
    expect(supportOfAll(t).map(v => v.supported)).toEqual(f1.map(() => true))
    expect(geometricVerdicts(['min', 'min'], zdt1)).toEqual(f1.map(() => true))
  })

  it('ZDT2 (non-convex): only the two ends are supported', () => {
    const t = efficientTable(['min', 'min'], zdt2)
    const expected = f1.map((_, i) => i === 0 || i === 10)
    expect(t.n).toBe(11)
    expect(supportOfAll(t).map(v => v.supported)).toEqual(expected)
    expect(geometricVerdicts(['min', 'min'], zdt2)).toEqual(expected)
  })
})

describe('outside check: the same LPs solved exactly by GLPK', () => {
  // GLPK's glpsol (Debian package glpk-utils) with --exact: simplex in rational arithmetic on
  // the very same doubles, so its optimum is the true t* of each LP. Fails, never skips, when
  // glpsol is missing.
  it('glpsol is installed', () => {
    expect(requireGlpsol()).toMatch(/glpsol$/)
  })

  // Points on a concave curve (ZDT2-like): every interior point is unsupported.
  const concave = fc.uniqueArray(fc.integer({ min: 0, max: 20 }), { minLength: 3, maxLength: 7 })
    .map(xs => ({ directions: ['min', 'min'] as Direction[], rows: xs.map(x => [x / 20, 1 - (x / 20) ** 2]) }))
  const sets = [
    ...fc.sample(matrixArb({ minN: 2, maxN: 9, minP: 2, maxP: 4, grid: 6 }), { seed: 1, numRuns: 25 }),
    ...fc.sample(matrixArb({ minN: 2, maxN: 9, minP: 2, maxP: 3, grid: 1000 }), { seed: 2, numRuns: 12 }),
    ...fc.sample(concave, { seed: 3, numRuns: 12 }),
  ]

  it('yalps and exact GLPK agree on every margin and verdict, non-convex fronts included', () => {
    let compared = 0
    let unsupported = 0
    for (const { directions, rows } of sets) {
      const t = efficientTable(directions, rows)
      supportOfAll(t).forEach((verdict, i) => {
        const lp = supportLp(t.values, t.n, t.p, i)
        if (!lp.includes('rival')) return // no distinct rival: nothing to solve
        const exact = solveExactly(lp)
        expect(Math.abs(verdict.margin - exact)).toBeLessThanOrEqual(SUPPORT_TOLERANCE / 10)
        expect(verdict.supported).toBe(exact >= -SUPPORT_TOLERANCE)
        compared++
        if (!verdict.supported) unsupported++
      })
    }
    // The sample must exercise both verdicts, or the agreement would prove little.
    expect(compared).toBeGreaterThan(100)
    expect(unsupported).toBeGreaterThan(20)
  })
})
