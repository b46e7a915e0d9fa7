import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { Direction } from '../../../../shared/types/decision'
import {
  canonicalise,
  dominates,
  paretoSets,
  paretoSetsReference,
  strictlyDominates,
  type ParetoSets,
} from '../../../../shared/utils/pareto'

interface Problem {
  n: number
  p: number
  canon: Float64Array
  consider?: Uint8Array
}

/** Small integer scores, so ties, duplicates and weakly efficient rows are common. */
function problemArb(options: { maxN: number, minP?: number, maxP: number }): fc.Arbitrary<Problem> {
  return fc
    .record({
      n: fc.integer({ min: 0, max: options.maxN }),
      p: fc.integer({ min: options.minP ?? 1, max: options.maxP }),
      top: fc.integer({ min: 0, max: 4 }),
      masked: fc.boolean(),
    })
    .chain(({ n, p, top, masked }) =>
      fc.record({
        scores: fc.array(fc.integer({ min: 0, max: top }), { minLength: n * p, maxLength: n * p }),
        consider: masked ? fc.array(fc.integer({ min: 0, max: 3 }), { minLength: n, maxLength: n }) : fc.constant(null),
      }).map(({ scores, consider }) => ({
        n,
        p,
        canon: Float64Array.from(scores),
        // A value other than 0/1 must count as "not considered" too.
        consider: consider === null ? undefined : Uint8Array.from(consider, v => (v === 0 ? 0 : v === 1 ? 2 : 1)),
      })),
    )
}

function isConsidered(problem: Problem, i: number): boolean {
  return problem.consider === undefined || problem.consider[i] === 1
}

/**
 * Laws every result must obey, checked pair by pair straight from the definitions. Collects the
 * broken laws (plain loops; an expect per pair would dominate the run time) and asserts once.
 */
function expectLawful(problem: Problem, sets: ParetoSets): void {
  const { n, p, canon } = problem
  const broken: string[] = []
  const check = (ok: boolean, law: string) => {
    if (!ok && broken.length < 5) broken.push(law)
  }
  check(sets.efficient.length === n && sets.weaklyEfficient.length === n, 'one flag per row')
  check(sets.dominator.length === n && sets.duplicateOf.length === n, 'one index per row')
  let count = 0
  for (let i = 0; i < n; i++) {
    const considered = isConsidered(problem, i)
    check(sets.efficient[i] === 0 || sets.weaklyEfficient[i] === 1, `efficient ⊆ weakly efficient (row ${i})`)
    check(sets.weaklyEfficient[i] === 0 || considered, `weakly efficient ⊆ considered (row ${i})`)
    if (!considered) {
      check(sets.dominator[i] === -1 && sets.duplicateOf[i] === -1, `row ${i} is not considered: no dominator, no group`)
      continue
    }
    if (sets.efficient[i] === 1) {
      count++
      check(sets.dominator[i] === -1, `efficient row ${i} has no dominator`)
      for (let j = 0; j < n; j++) {
        if (isConsidered(problem, j)) check(!dominates(canon, p, j, i), `efficient row ${i} is dominated by row ${j}`)
      }
    }
    else {
      const w = sets.dominator[i]!
      check(w >= 0 && isConsidered(problem, w) && dominates(canon, p, w, i), `row ${i}: dominator ${w} dominates it`)
      check(w >= 0 && sets.efficient[w] === 1, `row ${i}: dominator ${w} is efficient`)
    }
    const rep = sets.duplicateOf[i]!
    check(rep >= 0 && rep <= i, `row ${i}: duplicateOf ${rep} is not after it`)
    for (let d = 0; d < p; d++) check(canon[rep * p + d] === canon[i * p + d], `row ${i}: duplicateOf ${rep} has the same scores`)
    for (let j = 0; j < rep; j++) {
      if (!isConsidered(problem, j)) continue
      let equal = true
      for (let d = 0; d < p; d++) if (canon[j * p + d] !== canon[i * p + d]) equal = false
      check(!equal, `row ${i}: ${j} < duplicateOf ${rep} has the same scores`)
    }
    // Every copy of a vector shares its status.
    check(sets.efficient[i] === sets.efficient[rep] && sets.weaklyEfficient[i] === sets.weaklyEfficient[rep], `row ${i} shares its copy's status`)
  }
  check(sets.efficientCount === count, 'efficientCount counts the efficient rows')
  expect(broken).toEqual([])
}

/** Same sets; dominators may differ (any efficient dominator is a valid witness), so only their presence is compared. */
function expectSameSets(actual: ParetoSets, expected: ParetoSets): void {
  expect(Array.from(actual.efficient)).toEqual(Array.from(expected.efficient))
  expect(Array.from(actual.weaklyEfficient)).toEqual(Array.from(expected.weaklyEfficient))
  expect(Array.from(actual.duplicateOf)).toEqual(Array.from(expected.duplicateOf))
  expect(Array.from(actual.dominator, w => w >= 0)).toEqual(Array.from(expected.dominator, w => w >= 0))
  expect(actual.efficientCount).toBe(expected.efficientCount)
}

/** Deterministic PRNG (mulberry32) for the larger generated sets. */
function prng(seed: number): () => number {
  let state = seed >>> 0
  return () => {
    state = (state + 0x6d2b79f5) >>> 0
    let t = state
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

type Shape = 'integers' | 'uniform' | 'anti-correlated'

/** n×p matrix: small integers (ties), uniform doubles, or points near the plane Σx = const (large fronts). */
function generated(shape: Shape, n: number, p: number, seed: number, top = 3): Float64Array {
  const random = prng(seed)
  const canon = new Float64Array(n * p)
  for (let i = 0; i < n; i++) {
    let sum = 0
    for (let d = 0; d < p; d++) {
      const v = shape === 'integers' ? Math.floor(random() * (top + 1)) : random()
      canon[i * p + d] = v
      sum += v
    }
    if (shape === 'anti-correlated') for (let d = 0; d < p; d++) canon[i * p + d]! -= sum / p
  }
  return canon
}

function rows(canon: Float64Array, p: number): number[][] {
  return Array.from({ length: canon.length / p }, (_, i) => Array.from(canon.subarray(i * p, i * p + p)))
}

describe('dominance', () => {
  const tuples = fc.integer({ min: 1, max: 5 }).chain(p =>
    fc.record({
      p: fc.constant(p),
      canon: fc.array(fc.integer({ min: 0, max: 2 }), { minLength: 3 * p, maxLength: 3 * p }).map(v => Float64Array.from(v)),
    }),
  )

  it('is irreflexive', () => {
    fc.assert(fc.property(tuples, ({ p, canon }) => {
      for (let i = 0; i < 3; i++) {
        expect(dominates(canon, p, i, i)).toBe(false)
        expect(strictlyDominates(canon, p, i, i)).toBe(false)
      }
    }))
  })

  it('is asymmetric', () => {
    fc.assert(fc.property(tuples, ({ p, canon }) => {
      for (let i = 0; i < 3; i++) {
        for (let j = 0; j < 3; j++) {
          if (dominates(canon, p, i, j)) expect(dominates(canon, p, j, i)).toBe(false)
          if (strictlyDominates(canon, p, i, j)) expect(dominates(canon, p, i, j)).toBe(true)
        }
      }
    }))
  })

  it('is transitive', () => {
    let chains = 0
    fc.assert(fc.property(tuples, ({ p, canon }) => {
      for (const [a, b, c] of [[0, 1, 2], [0, 2, 1], [1, 0, 2], [1, 2, 0], [2, 0, 1], [2, 1, 0]] as const) {
        if (dominates(canon, p, a, b) && dominates(canon, p, b, c)) {
          chains++
          expect(dominates(canon, p, a, c)).toBe(true)
        }
      }
    }), { numRuns: 500 })
    // The property must not hold vacuously.
    expect(chains).toBeGreaterThan(0)
  })

  it('is not complete: random sets hold pairs that neither dominates, and equal vectors are such a pair', () => {
    let incomparable = 0
    fc.assert(fc.property(tuples.filter(({ p }) => p >= 2), ({ p, canon }) => {
      for (let i = 0; i < 3; i++) {
        for (let j = i + 1; j < 3; j++) {
          if (!dominates(canon, p, i, j) && !dominates(canon, p, j, i)) incomparable++
        }
      }
    }), { numRuns: 200 })
    expect(incomparable).toBeGreaterThan(0)
    const pair = Float64Array.from([1, 2, 2, 1, 1, 2])
    expect(dominates(pair, 2, 0, 1)).toBe(false)
    expect(dominates(pair, 2, 1, 0)).toBe(false)
    expect(dominates(pair, 2, 0, 2)).toBe(false)
    expect(dominates(pair, 2, 2, 0)).toBe(false)
  })

  it('rejects p < 1', () => {
    expect(() => dominates(new Float64Array(0), 0, 0, 0)).toThrow(RangeError)
    expect(() => strictlyDominates(new Float64Array(0), 0, 0, 0)).toThrow(RangeError)
  })
})

describe('canonicalise', () => {
  it('negates maximised criteria once and leaves minimised ones alone', () => {
    const canon = canonicalise([1, 5, 2, 3, 0, 7], 2, 3, ['min', 'max', 'min'])
    expect(Array.from(canon)).toEqual([1, -5, 2, 3, 0, 7])
    expect(Object.is(canon[4], 0)).toBe(true) // −0 folded into +0, so copies stay bit-identical
  })

  it.each([
    [Number.NaN, 'NaN'],
    [Number.POSITIVE_INFINITY, 'Infinity'],
    [Number.NEGATIVE_INFINITY, '-Infinity'],
  ])('rejects %s with a message naming row and column', (bad, shown) => {
    const scores = [1, 2, 3, 4, 5, 6]
    scores[5] = bad
    expect(() => canonicalise(scores, 2, 3, ['min', 'min', 'max'])).toThrow(RangeError)
    expect(() => canonicalise(scores, 2, 3, ['min', 'min', 'max'])).toThrow(`row 1, column 2 is ${shown}`)
  })

  it('rejects shapes that do not fit', () => {
    expect(() => canonicalise([1, 2, 3], 2, 2, ['min', 'min'])).toThrow(RangeError)
    expect(() => canonicalise([1, 2], 1, 2, ['min'])).toThrow(RangeError)
    expect(() => canonicalise([], 0, 0, [])).toThrow(RangeError)
    expect(() => canonicalise([1], 1, 1, ['up' as Direction])).toThrow(RangeError)
  })

  it('flipping a criterion\'s direction is the same as negating its scores', () => {
    const arb = fc.record({
      n: fc.integer({ min: 0, max: 30 }),
      p: fc.integer({ min: 1, max: 6 }),
    }).chain(({ n, p }) => fc.record({
      n: fc.constant(n),
      p: fc.constant(p),
      scores: fc.array(fc.integer({ min: -3, max: 3 }), { minLength: n * p, maxLength: n * p }),
      directions: fc.array(fc.constantFrom<Direction>('min', 'max'), { minLength: p, maxLength: p }),
      flip: fc.integer({ min: 0, max: p - 1 }),
    }))
    fc.assert(fc.property(arb, ({ n, p, scores, directions, flip }) => {
      const flippedDirections = directions.map((d, c) => (c === flip ? (d === 'min' ? 'max' : 'min') : d))
      const negatedScores = scores.map((v, k) => (k % p === flip ? -v : v))
      const a = canonicalise(scores, n, p, directions)
      const b = canonicalise(negatedScores, n, p, flippedDirections)
      expect(Array.from(a)).toEqual(Array.from(b))
      const sa = paretoSets(a, n, p)
      const sb = paretoSets(b, n, p)
      expectSameSets(sa, sb)
      expect(Array.from(sa.dominator)).toEqual(Array.from(sb.dominator))
    }), { numRuns: 200 })
  })
})

describe('paretoSets on hand-made cases', () => {
  it('returns empty arrays for no rows and rejects p = 0', () => {
    const sets = paretoSets(new Float64Array(0), 0, 3)
    expect(sets.efficient).toHaveLength(0)
    expect(sets.efficientCount).toBe(0)
    expect(() => paretoSets(new Float64Array(0), 0, 0)).toThrow(RangeError)
    expect(() => paretoSetsReference(new Float64Array(0), 0, 0)).toThrow(RangeError)
  })

  it('keeps a single alternative', () => {
    const sets = paretoSets(Float64Array.from([4, 2]), 1, 2)
    expect(Array.from(sets.efficient)).toEqual([1])
    expect(Array.from(sets.weaklyEfficient)).toEqual([1])
    expect(Array.from(sets.dominator)).toEqual([-1])
    expect(Array.from(sets.duplicateOf)).toEqual([0])
    expect(sets.efficientCount).toBe(1)
  })

  it('keeps every copy when all alternatives are identical', () => {
    const sets = paretoSets(Float64Array.from([3, 1, 3, 1, 3, 1, 3, 1]), 4, 2)
    expect(Array.from(sets.efficient)).toEqual([1, 1, 1, 1])
    expect(Array.from(sets.duplicateOf)).toEqual([0, 0, 0, 0])
    expect(sets.efficientCount).toBe(4)
  })

  it('treats −0 and +0 as the same score', () => {
    const sets = paretoSets(Float64Array.from([-0, 1, 0, 1, 0, 2]), 3, 2)
    expect(Array.from(sets.duplicateOf)).toEqual([0, 0, 2])
    expect(Array.from(sets.efficient)).toEqual([1, 1, 0])
  })

  it('with p = 1 keeps every copy of the minimum and nothing else', () => {
    const sets = paretoSets(Float64Array.from([3, 1, 2, 1, 5]), 5, 1)
    expect(Array.from(sets.efficient)).toEqual([0, 1, 0, 1, 0])
    expect(Array.from(sets.weaklyEfficient)).toEqual([0, 1, 0, 1, 0])
    expect(Array.from(sets.duplicateOf)).toEqual([0, 1, 2, 1, 4])
    expect([1, 3]).toContain(sets.dominator[0])
    expect([1, 3]).toContain(sets.dominator[4])
  })

  it('(1,3) is dominated by (1,2) but still weakly efficient (min, min)', () => {
    const canon = canonicalise([1, 2, 1, 3, 2, 3], 3, 2, ['min', 'min'])
    const sets = paretoSets(canon, 3, 2)
    expect(Array.from(sets.efficient)).toEqual([1, 0, 0])
    expect(Array.from(sets.weaklyEfficient)).toEqual([1, 1, 0]) // (2,3) is strictly worse than (1,2)
    expect(Array.from(sets.dominator)).toEqual([-1, 0, 0])
  })

  it('the same example with a maximised criterion: (1,2) is dominated by (1,3) but weakly efficient (min, max)', () => {
    const canon = canonicalise([1, 2, 1, 3], 2, 2, ['min', 'max'])
    const sets = paretoSets(canon, 2, 2)
    expect(Array.from(sets.efficient)).toEqual([0, 1])
    expect(Array.from(sets.weaklyEfficient)).toEqual([1, 1])
    expect(Array.from(sets.dominator)).toEqual([1, -1])
  })

  it.each([10, 200])('a criterion equal for all %i alternatives leaves every one weakly efficient', (n) => {
    const canon = new Float64Array(n * 3)
    for (let i = 0; i < n; i++) {
      canon[i * 3] = i % 7
      canon[i * 3 + 1] = 5
      canon[i * 3 + 2] = (i * 3) % 11
    }
    const sets = paretoSets(canon, n, 3)
    expect(Array.from(sets.weaklyEfficient)).toEqual(new Array(n).fill(1))
    expect(sets.efficient.includes(0)).toBe(true)
    expectLawful({ n, p: 3, canon }, sets)
    expectSameSets(sets, paretoSetsReference(canon, n, 3))
  })

  it('handles extreme magnitudes (sums that overflow, subnormals, ±0) like the reference', () => {
    const values = [Number.MAX_VALUE, -Number.MAX_VALUE, 1e308, -1e308, 5e-324, -5e-324, 0, -0, 1, -1]
    for (const p of [2, 3, 5]) {
      const random = prng(p)
      const n = 2000
      const canon = Float64Array.from({ length: n * p }, () => values[Math.floor(random() * values.length)]!)
      const sets = paretoSets(canon, n, p)
      expectLawful({ n, p, canon }, sets)
      expectSameSets(sets, paretoSetsReference(canon, n, p))
    }
  })

  it('names efficient dominators when every alternative is the worst on some criterion', () => {
    // Every row reaches its column's maximum somewhere, so no row dominates a large share of the
    // bounding box and the first guesses at a strong dominator are themselves dominated.
    for (let seed = 1; seed <= 12; seed++) {
      const n = 150
      const p = 3
      const canon = generated('integers', n, p, seed, 9)
      for (let i = 0; i < n; i++) canon[i * p + (i % p)] = 9
      const sets = paretoSets(canon, n, p)
      expectLawful({ n, p, canon }, sets)
      expectSameSets(sets, paretoSetsReference(canon, n, p))
    }
  })

  it('leaves out rows that are not considered, even as dominators or first copies', () => {
    // Row 0 would dominate everything, but it is not considered.
    const canon = Float64Array.from([0, 0, 1, 1, 1, 1, 2, 2])
    const sets = paretoSets(canon, 4, 2, Uint8Array.from([0, 1, 1, 1]))
    expect(Array.from(sets.efficient)).toEqual([0, 1, 1, 0])
    expect(Array.from(sets.weaklyEfficient)).toEqual([0, 1, 1, 0])
    expect(Array.from(sets.duplicateOf)).toEqual([-1, 1, 1, 3])
    expect(sets.dominator[0]).toBe(-1)
    expect([1, 2]).toContain(sets.dominator[3])
    expect(sets.efficientCount).toBe(2)
  })

  it('rejects a NaN or infinite considered score, naming row and column, and ignores unconsidered ones', () => {
    const canon = Float64Array.from([0, 1, 2, Number.NaN, 4, 5])
    expect(() => paretoSets(canon, 3, 2)).toThrow('row 1, column 1')
    expect(() => paretoSetsReference(canon, 3, 2)).toThrow('row 1, column 1')
    canon[3] = Number.POSITIVE_INFINITY
    expect(() => paretoSets(canon, 3, 2)).toThrow(RangeError)
    const sets = paretoSets(canon, 3, 2, Uint8Array.from([1, 0, 1]))
    expect(Array.from(sets.efficient)).toEqual([1, 0, 0])
  })

  it('rejects shapes that do not fit', () => {
    expect(() => paretoSets(new Float64Array(5), 3, 2)).toThrow(RangeError)
    expect(() => paretoSets(new Float64Array(6), 3, 2, new Uint8Array(2))).toThrow(RangeError)
    expect(() => paretoSets(new Float64Array(6), 3.5, 2)).toThrow(RangeError)
  })
})

describe('paretoSets properties', () => {
  it('obeys the laws and matches the O(n²·p) reference on small tied sets, p = 1..8, with and without a mask', () => {
    fc.assert(fc.property(problemArb({ maxN: 40, maxP: 8 }), (problem) => {
      const sets = paretoSets(problem.canon, problem.n, problem.p, problem.consider)
      expectLawful(problem, sets)
      expectSameSets(sets, paretoSetsReference(problem.canon, problem.n, problem.p, problem.consider))
    }), { numRuns: 400 })
  })

  it('every p from 1 to 8 gets its own run against the reference', () => {
    for (let p = 1; p <= 8; p++) {
      fc.assert(fc.property(problemArb({ maxN: 90, minP: p, maxP: p }), (problem) => {
        const sets = paretoSets(problem.canon, problem.n, problem.p, problem.consider)
        expectSameSets(sets, paretoSetsReference(problem.canon, problem.n, problem.p, problem.consider))
      }), { numRuns: 60 })
    }
  })

  it('does not depend on the order of the rows', () => {
    const arb = problemArb({ maxN: 40, maxP: 6 }).chain(problem =>
      fc.record({
        problem: fc.constant(problem),
        order: fc.array(fc.integer(), { minLength: problem.n, maxLength: problem.n }),
      }),
    )
    fc.assert(fc.property(arb, ({ problem, order }) => {
      const { n, p, canon, consider } = problem
      const perm = Array.from({ length: n }, (_, i) => i).sort((a, b) => order[a]! - order[b]! || a - b)
      const shuffled: Problem = {
        n,
        p,
        canon: new Float64Array(n * p),
        consider: consider && Uint8Array.from(perm, i => consider[i]!),
      }
      perm.forEach((from, to) => shuffled.canon.set(canon.subarray(from * p, from * p + p), to * p))
      const before = paretoSets(canon, n, p, consider)
      const after = paretoSets(shuffled.canon, n, p, shuffled.consider)
      expectLawful(shuffled, after)
      expect(Array.from(after.efficient)).toEqual(perm.map(i => before.efficient[i]))
      expect(Array.from(after.weaklyEfficient)).toEqual(perm.map(i => before.weaklyEfficient[i]))
      expect(after.efficientCount).toBe(before.efficientCount)
      // Same duplicate groups: two rows share a group after the shuffle exactly when they did before.
      for (let a = 0; a < n; a++) {
        for (let b = 0; b < n; b++) {
          if (after.duplicateOf[a]! < 0) continue
          expect(after.duplicateOf[a] === after.duplicateOf[b]).toBe(before.duplicateOf[perm[a]!] === before.duplicateOf[perm[b]!])
        }
      }
    }), { numRuns: 200 })
  })

  // Large enough to reach the prefilter, the radix sorts, the k-d trees and their merges.
  it.each([
    ['integers', 2],
    ['integers', 3],
    ['integers', 5],
    ['integers', 8],
    ['uniform', 2],
    ['uniform', 4],
    ['uniform', 7],
    ['anti-correlated', 2],
    ['anti-correlated', 3],
    ['anti-correlated', 5],
    ['anti-correlated', 8],
  ] as [Shape, number][])('matches the reference on larger %s sets with p = %i', (shape, p) => {
    fc.assert(fc.property(
      fc.integer({ min: 100, max: 2500 }),
      fc.integer(),
      fc.integer({ min: 1, max: 6 }),
      fc.boolean(),
      (n, seed, top, masked) => {
        const canon = generated(shape, n, p, seed, top)
        const random = prng(seed ^ 0x5bd1e995)
        const consider = masked ? Uint8Array.from({ length: n }, () => (random() < 0.8 ? 1 : 0)) : undefined
        const sets = paretoSets(canon, n, p, consider)
        expectSameSets(sets, paretoSetsReference(canon, n, p, consider))
        for (let i = 0; i < n; i++) {
          const w = sets.dominator[i]!
          if (w >= 0) {
            expect(dominates(canon, p, w, i)).toBe(true)
            expect(sets.efficient[w]).toBe(1)
          }
        }
      },
    ), { numRuns: 6 })
  })

  it('finds the documented front of a tiny anti-correlated set', () => {
    // (0,3) (1,2) (2,1) (3,0) form the front; (2,2) and (3,3) are dominated by (1,2) or (2,1).
    const canon = Float64Array.from([0, 3, 1, 2, 2, 2, 2, 1, 3, 0, 3, 3])
    const sets = paretoSets(canon, 6, 2)
    expect(Array.from(sets.efficient)).toEqual([1, 1, 0, 1, 1, 0])
    expect(rows(canon, 2)[sets.dominator[2]!]).toSatisfy((r: number[]) => (r[0] === 1 && r[1] === 2) || (r[0] === 2 && r[1] === 1))
  })
})
