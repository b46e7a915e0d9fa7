/**
 * The compromise candidate (shared/utils/compromise.ts). Checked by hand on small tables and,
 * as a property, against a plain brute force written here (direct dot products, no engine code).
 */
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { NormalisedTable } from '../../../../shared/types/engine'
import { compromiseCandidate } from '../../../../shared/utils/compromise'
import { analyseLedger } from '../../../../shared/utils/ledger'
import { normaliseTable } from '../../../../shared/utils/normalise'
import { efficientTable, ledgerOf, matrixArb } from '../../../reference/ledgerFixtures'

/** A table whose normalised values are the given numbers (maximised, best 1, worst 0). */
function plainTable(rows: number[][]): NormalisedTable {
  const p = rows[0]!.length
  return normaliseTable(
    Array.from({ length: p }, (_, k) => `c${k}`),
    new Array(p).fill('max'),
    rows.map((_, i) => `a${i}`),
    rows.flat(),
    new Array(p).fill(1),
    new Array(p).fill(0),
  )
}

describe('compromiseCandidate', () => {
  it('picks the alternative with the smallest largest shortfall (worked by hand)', () => {
    // Stakeholders: s1 all on c0, s2 all on c1, s3 equal weights. Scores
    //   a0 (1,0,0): s1 1, s2 0, s3 1/3     a1 (0,1,0): 0, 1, 1/3    a2 (0,0,1): 0, 0, 1/3
    //   a3 (.4,.4,.4): .4, .4, .4          a4 (.5,.5,0): .5, .5, 1/3
    // Bests: s1 1, s2 1, s3 0.4. Largest shortfalls: a0 1, a1 1, a2 1, a3 0.6, a4 0.5 (s1 and s2).
    const table = plainTable([[1, 0, 0], [0, 1, 0], [0, 0, 1], [0.4, 0.4, 0.4], [0.5, 0.5, 0]])
    const result = compromiseCandidate(table, [[1, 0, 0], [0, 1, 0], [1, 1, 1]], { stakeholderIds: ['ana', 'bo', 'cy'] })
    expect(result.compromise!.alternativeId).toBe('a4')
    expect(result.compromise!.maxShortfall).toBeCloseTo(0.5, 14)
    expect(result.compromise!.worstFor).toEqual([0, 1])
    expect(result.compromise!.worstForIds).toEqual(['ana', 'bo'])
    expect(result.compromise!.favouredBy).toEqual([])
    expect(result.tiedWith).toEqual([])
    expect(result.standings.map(s => Number(s.maxShortfall.toFixed(12)))).toEqual([1, 1, 1, 0.6, 0.5])
    expect(result.stakeholderBest.map(x => Number(x.toFixed(12)))).toEqual([1, 1, 0.4])
    expect(result.stakeholderFavourites).toEqual([['a0'], ['a1'], ['a3']])
    expect(result.unfavouredIds).toEqual(['a2', 'a4'])
    expect(result.standings[0]!.favouredBy).toEqual([0])
    expect(result.standings[3]!.shortfalls[2]).toBe(0)
  })

  it('breaks a tie on the largest shortfall by the next largest (lexicographic minimax)', () => {
    // s1 on c0, s2 on c1. a2 = (0.6, 0.5): shortfalls (0.4, 0.5); a3 = (0.5, 0.8): (0.5, 0.2).
    // Both have largest 0.5; sorted, a3's (0.5, 0.2) beats a2's (0.5, 0.4) although a2 comes first.
    const table = plainTable([[1, 0], [0, 1], [0.6, 0.5], [0.5, 0.8]])
    const result = compromiseCandidate(table, [[1, 0], [0, 1]])
    expect(result.standings[2]!.maxShortfall).toBeCloseTo(0.5, 14)
    expect(result.standings[3]!.maxShortfall).toBeCloseTo(0.5, 14)
    expect(result.compromise!.alternativeId).toBe('a3')
    expect(result.compromise!.worstForIds).toEqual(['stakeholder 1'])
    expect(result.tiedWith).toEqual([])
  })

  it('lists identical alternatives as tied and keeps the first in table order', () => {
    const table = plainTable([[1, 0], [0, 1], [0.5, 0.8], [0.5, 0.8]])
    const result = compromiseCandidate(table, [[1, 0], [0, 1]])
    expect(result.compromise!.alternativeId).toBe('a2')
    expect(result.tiedWith).toEqual(['a3'])
  })

  it('a unanimous favourite is the compromise with no shortfall', () => {
    const table = plainTable([[1, 0.9], [0, 1], [1, 0]])
    const result = compromiseCandidate(table, [[1, 1], [2, 1], [1, 2]])
    expect(result.compromise).toMatchObject({ alternativeId: 'a0', maxShortfall: 0, favouredBy: [0, 1, 2] })
    expect(result.unfavouredIds).toEqual(['a1', 'a2'])
  })

  it('works on an analysis (efficient alternatives only)', () => {
    const ledger = ledgerOf(['min', 'min'], [[10, 0], [0, 10], [5, 5], [6, 6]])
    const analysis = analyseLedger(ledger.criteria, ledger.alternatives, { support: false })
    const result = compromiseCandidate(analysis, [[1, 0], [0, 1]])
    expect(result.standings.map(s => s.alternativeId)).toEqual(['a0', 'a1', 'a2'])
    expect(result.compromise!.alternativeId).toBe('a2')
  })

  it('property: agrees with a brute force (max shortfall, who bears it, nobody\'s favourite)', () => {
    const weightsArb = (p: number) => fc.array(fc.integer({ min: 0, max: 5 }), { minLength: p, maxLength: p }).filter(w => w.some(x => x > 0))
    const caseArb = matrixArb({ minN: 1, maxN: 9, minP: 1, maxP: 4, grid: 5 }).chain(m =>
      fc.record({ m: fc.constant(m), stakeholders: fc.array(weightsArb(m.directions.length), { minLength: 1, maxLength: 5 }) }))
    fc.assert(fc.property(caseArb, ({ m, stakeholders }) => {
      const table = efficientTable(m.directions, m.rows)
      const { n, p, values } = table
      const result = compromiseCandidate(table, stakeholders)
      const scores = stakeholders.map((w) => {
        const total = w.reduce((a, b) => a + b, 0)
        return Array.from({ length: n }, (_, i) => w.reduce((s, x, k) => s + (x / total) * values[i * p + k]!, 0))
      })
      const best = scores.map(row => Math.max(...row))
      const maxShortfall = Array.from({ length: n }, (_, i) => Math.max(...scores.map((row, s) => best[s]! - row[i]!)))
      const minimax = Math.min(...maxShortfall)
      expect(result.compromise!.maxShortfall).toBeCloseTo(minimax, 12)
      result.standings.forEach((standing, i) => {
        expect(standing.maxShortfall).toBeCloseTo(maxShortfall[i]!, 12)
        const worst = scores.map((_, s) => s).filter(s => Math.abs(best[s]! - scores[s]![i]! - maxShortfall[i]!) < 1e-12)
        expect(standing.worstFor).toEqual(worst)
      })
      const favoured = new Set<string>()
      scores.forEach((row, s) => row.forEach((x, i) => {
        if (best[s]! - x < 1e-12) favoured.add(table.alternativeIds[i]!)
      }))
      expect(result.unfavouredIds).toEqual(table.alternativeIds.filter(id => !favoured.has(id)))
    }), { numRuns: 300 })
  })

  it.each<[string, () => unknown]>([
    ['no stakeholders', () => compromiseCandidate(plainTable([[1, 0]]), [])],
    ['a bad weighting', () => compromiseCandidate(plainTable([[1, 0]]), [[1, 0], [0, -1]])],
    ['a weighting of the wrong length', () => compromiseCandidate(plainTable([[1, 0]]), [[1, 0, 0]])],
    ['ids that do not match', () => compromiseCandidate(plainTable([[1, 0]]), [[1, 0]], { stakeholderIds: ['a', 'b'] })],
  ])('rejects %s with a RangeError', (_, call) => {
    expect(call).toThrow(RangeError)
  })

  it('names the stakeholder whose weighting is bad', () => {
    expect(() => compromiseCandidate(plainTable([[1, 0]]), [[1, 0], [0, -1]])).toThrow(/Stakeholder 2/)
  })

  it('an empty table has no compromise', () => {
    const result = compromiseCandidate(efficientTable(['max'], []), [[1]])
    expect(result.compromise).toBeNull()
    expect(result.standings).toEqual([])
    expect(result.unfavouredIds).toEqual([])
  })
})
