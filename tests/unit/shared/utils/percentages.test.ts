import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { innerPercentBounds, largestRemainderPercentages } from '../../../../shared/utils/percentages'

const sum = (xs: readonly number[]) => xs.reduce((a, b) => a + b, 0)
/** Non-negative finite weights with at least one positive, as the sliders can produce. */
const weightVectors = fc.array(fc.double({ min: 0, max: 1e6, noNaN: true, noDefaultInfinity: true }), { minLength: 1, maxLength: 30 })
  .filter(ws => ws.some(w => w > 0))

describe('largestRemainderPercentages', () => {
  it.each([
    { weights: [1, 1, 1], expected: [34, 33, 33] },
    { weights: [0.5, 0.25, 0.25], expected: [50, 25, 25] },
    { weights: [2, 1], expected: [67, 33] },
    { weights: [1, 0, 0], expected: [100, 0, 0] },
    // 1/7 = 14.2857…%: four shares round up, three stay down, earlier index first on equal remainders.
    { weights: [1, 1, 1, 1, 1, 1, 1], expected: [15, 15, 14, 14, 14, 14, 14] },
    // Remainders .6, .3, .1 (quotas 20.6, 30.3, 49.1): the one missing unit goes to the largest.
    { weights: [20.6, 30.3, 49.1], expected: [21, 30, 49] },
    // Binary noise: 0.29 · 100 = 28.999999999999996 still reads 29.
    { weights: [0.29, 0.71], expected: [29, 71] },
    { weights: [1e308, 1e308], expected: [50, 50] },
    { weights: [5e-324, 0], expected: [100, 0] },
    // Equal in decimal, not in binary ((1 − 0.89) / 2 = 0.05499999999999999): still a tie, by index.
    { weights: [0.89, (1 - 0.89) / 2, 0.055], expected: [89, 6, 5] },
    { weights: [0.89, 0.055, (1 - 0.89) / 2], expected: [89, 6, 5] },
  ])('$weights → $expected', ({ weights, expected }) => {
    expect(largestRemainderPercentages(weights)).toEqual(expected)
  })

  it('shares another whole total', () => {
    expect(largestRemainderPercentages([1, 1, 1], 10)).toEqual([4, 3, 3])
    expect(largestRemainderPercentages([3, 1], 0)).toEqual([0, 0])
  })

  it('gives nothing for no weights and zeros when every weight is zero', () => {
    expect(largestRemainderPercentages([])).toEqual([])
    expect(largestRemainderPercentages([0, 0, -0])).toEqual([0, 0, 0])
  })

  it.each([
    [[1, -0.5]],
    [[1, Number.NaN]],
    [[Number.POSITIVE_INFINITY, 1]],
  ])('rejects the weights %j', (weights) => {
    expect(() => largestRemainderPercentages(weights)).toThrow(RangeError)
  })

  it.each([2.5, -1, Number.NaN])('rejects a total of %s', (total) => {
    expect(() => largestRemainderPercentages([1, 2], total)).toThrow(RangeError)
  })

  it('always sums to exactly 100, in whole numbers from 0 to 100', () => {
    fc.assert(fc.property(weightVectors, (weights) => {
      const shares = largestRemainderPercentages(weights)
      expect(shares).toHaveLength(weights.length)
      expect(sum(shares)).toBe(100)
      for (const s of shares) {
        expect(Number.isInteger(s)).toBe(true)
        expect(s).toBeGreaterThanOrEqual(0)
        expect(s).toBeLessThanOrEqual(100)
      }
    }), { numRuns: 2000 })
  })

  it('rounds each exact share down or up, never further', () => {
    fc.assert(fc.property(weightVectors, (weights) => {
      const shares = largestRemainderPercentages(weights)
      const total = sum(weights)
      shares.forEach((s, k) => {
        const exact = (weights[k]! / total) * 100
        expect(Math.abs(s - exact)).toBeLessThan(1 + 1e-9)
      })
    }), { numRuns: 2000 })
  })

  it('never gives a heavier weight a smaller percentage', () => {
    fc.assert(fc.property(fc.array(fc.nat({ max: 1000 }), { minLength: 1, maxLength: 12 }).filter(ws => ws.some(w => w > 0)), (weights) => {
      const shares = largestRemainderPercentages(weights)
      for (let i = 0; i < weights.length; i++) {
        for (let j = 0; j < weights.length; j++) {
          if (weights[i]! > weights[j]!) expect(shares[i]).toBeGreaterThanOrEqual(shares[j]!)
          if (weights[i] === weights[j]) expect(Math.abs(shares[i]! - shares[j]!)).toBeLessThanOrEqual(1)
        }
      }
    }), { numRuns: 1000 })
  })

  it('leaves figures that already sum to 100 as they are, and ignores the scale', () => {
    fc.assert(fc.property(weightVectors, fc.integer({ min: -20, max: 20 }), (weights, exponent) => {
      const shares = largestRemainderPercentages(weights)
      expect(largestRemainderPercentages(shares)).toEqual(shares)
      // A power of two rescales without rounding (away from underflow), so the figures cannot change.
      const scale = 2 ** exponent
      if (weights.every(w => w === 0 || w > 1e-290)) expect(largestRemainderPercentages(weights.map(w => w * scale))).toEqual(shares)
    }), { numRuns: 1000 })
  })
})

describe('innerPercentBounds', () => {
  it.each([
    { lowest: 0.183, highest: 0.417, low: 19, high: 41 },
    { lowest: 0, highest: 1, low: 0, high: 100 },
    { lowest: 0.18, highest: 0.41000000000000003, low: 18, high: 41 },
    // 0.29 · 100 = 28.999999999999996: still 29 at both ends.
    { lowest: 0.29, highest: 0.29, low: 29, high: 29 },
    // Narrower than one whole percentage: the bounds cross, which the page reads as "close to a tie".
    { lowest: 0.301, highest: 0.309, low: 31, high: 30 },
  ])('[$lowest, $highest] → $low% to $high%', ({ lowest, highest, low, high }) => {
    expect(innerPercentBounds(lowest, highest)).toEqual({ low, high })
  })
})
