import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { rankOrderCentroid, weightsFromRanking } from '../../../../shared/utils/ranking'

describe('rankOrderCentroid', () => {
  it('matches Barron & Barrett (1996) for three criteria: 0.6111, 0.2778, 0.1111', () => {
    // Barron & Barrett, "Decision quality using ranked attribute weights", Management Science
    // 42(11), 1996. The four-decimal values and their closed form 11/18, 5/18, 2/18 are recalled
    // from memory by the lead; the search tool found no copy of the paper's table, so they are
    // unverified. The closed form does follow from the paper's formula, checked by hand.
    const w = rankOrderCentroid(3)
    expect(w[0]).toBeCloseTo(11 / 18, 15)
    expect(w[1]).toBeCloseTo(5 / 18, 15)
    expect(w[2]).toBeCloseTo(2 / 18, 15)
    expect(w.map(x => Number(x.toFixed(4)))).toEqual([0.6111, 0.2778, 0.1111])
  })

  it('gives 25/48, 13/48, 7/48, 3/48 for four criteria', () => {
    // Worked by hand from w_k = (1/n)·Σ_{i=k..n} 1/i with n = 4: (1 + ½ + ⅓ + ¼)/4 = 25/48, …
    expect(rankOrderCentroid(4).map(x => x * 48)).toEqual([25, 13, 7, 3].map(x => expect.closeTo(x, 12)))
  })

  it('gives all weight to a single criterion', () => {
    expect(rankOrderCentroid(1)).toEqual([1])
  })

  it.each([0, -1, 2.5, Number.NaN])('rejects %s criteria', (n) => {
    expect(() => rankOrderCentroid(n)).toThrow(RangeError)
  })

  it('property: weights sum to 1 and strictly decrease', () => {
    fc.assert(fc.property(fc.integer({ min: 1, max: 60 }), (n) => {
      const w = rankOrderCentroid(n)
      expect(w).toHaveLength(n)
      expect(w.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12)
      for (let k = 1; k < n; k++) expect(w[k]!).toBeLessThan(w[k - 1]!)
    }))
  })
})

describe('weightsFromRanking', () => {
  it('shares tied positions: ranks 1, 2, 2, 3 give 25/48, 10/48, 10/48, 3/48', () => {
    // By hand: ROC for four positions is 25/48, 13/48, 7/48, 3/48; the tie shares (13 + 7)/2.
    const w = weightsFromRanking([1, 2, 2, 3])
    expect(w[0]).toBeCloseTo(25 / 48, 15)
    expect(w[1]).toBeCloseTo(10 / 48, 15)
    expect(w[2]).toBeCloseTo(10 / 48, 15)
    expect(w[3]).toBeCloseTo(3 / 48, 15)
  })

  it.each([
    ['only the order counts', [10, 20, 20, 30], [1, 2, 2, 3]],
    ['criteria may be listed in any order', [3, 1, 2], null],
  ])('%s', (_, ranks, same) => {
    const w = weightsFromRanking(ranks)
    if (same !== null) expect(w).toEqual(weightsFromRanking(same))
    else expect(w).toEqual([rankOrderCentroid(3)[2], rankOrderCentroid(3)[0], rankOrderCentroid(3)[1]])
  })

  it('all tied gives equal weights', () => {
    for (const x of weightsFromRanking([4, 4, 4, 4])) expect(x).toBeCloseTo(0.25, 15)
  })

  it.each([[[]], [[1, Number.NaN]], [[1, Infinity]]])('rejects %j', (ranks) => {
    expect(() => weightsFromRanking(ranks)).toThrow(RangeError)
  })

  it('property: sums to 1, ties share equally, a more important criterion weighs more', () => {
    fc.assert(fc.property(fc.array(fc.integer({ min: 1, max: 5 }), { minLength: 1, maxLength: 12 }), (ranks) => {
      const w = weightsFromRanking(ranks)
      expect(w.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12)
      for (let i = 0; i < ranks.length; i++) {
        for (let j = 0; j < ranks.length; j++) {
          if (ranks[i] === ranks[j]) expect(w[i]).toBe(w[j])
          if (ranks[i]! < ranks[j]!) expect(w[i]!).toBeGreaterThan(w[j]!)
        }
      }
    }))
  })
})
