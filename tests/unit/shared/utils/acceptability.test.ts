/**
 * SMAA-2 acceptability (shared/utils/acceptability.ts).
 *
 * Outside references:
 *  - Uniformity of the weight sampler: SciPy (Debian python3-scipy, installed by scripts/test.mjs)
 *    `scipy.stats.kstest` against the Beta(1, p − 1) law of one coordinate of a uniform point of
 *    the simplex (the marginal of Dirichlet(1, …, 1); e.g. Devroye, "Non-Uniform Random Variate
 *    Generation", 1986, ch. XI.4). The test fails, never skips, when scipy cannot be imported.
 *  - Exact acceptabilities: two criteria by the breakpoints of the score lines on the weight
 *    segment (computed here, independently of the module); three criteria by the polygon areas
 *    of weightMap.ts, itself checked against SciPy in weightMap.test.ts.
 * Monte Carlo estimates must agree with exact values within 4 standard errors, the error taken
 * from the exact value, sqrt(a(1 − a)/N). Seeds are fixed, so the tests are deterministic.
 */
import { spawnSync } from 'node:child_process'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { NormalisedTable } from '../../../../shared/types/engine'
import {
  acceptability,
  acceptabilityAsync,
  mulberry32,
  sampleSimplex,
  startAcceptability,
  type AcceptabilityResult,
} from '../../../../shared/utils/acceptability'
import { analyseLedger } from '../../../../shared/utils/ledger'
import { normaliseTable } from '../../../../shared/utils/normalise'
import { weightedSumFavourite } from '../../../../shared/utils/scalarise'
import { weightLine, weightMap } from '../../../../shared/utils/weightMap'
import { efficientTable, ledgerOf, matrixArb } from '../../../reference/ledgerFixtures'

const PYTHON = '/usr/bin/python3'

/** p-value of SciPy's one-sample Kolmogorov–Smirnov test of `data` against Beta(a, b). */
function scipyKsBeta(data: number[], a: number, b: number): number {
  const script = [
    'import json, sys',
    'from scipy import stats',
    'x = json.load(sys.stdin)',
    `print(json.dumps(stats.kstest(x, "beta", args=(${a}, ${b})).pvalue))`,
  ].join('\n')
  const run = spawnSync(PYTHON, ['-c', script], { input: JSON.stringify(data), encoding: 'utf8', timeout: 60_000 })
  if (run.error) throw new Error(`cannot run ${PYTHON}: ${run.error.message}`)
  if (run.status !== 0) throw new Error(`scipy kstest failed (is python3-scipy installed?): ${run.stderr.trim()}`)
  return JSON.parse(run.stdout) as number
}

/**
 * Exact rank acceptabilities and first-rank central weights for two criteria, w = weight of
 * criterion 0 uniform on [0, 1]. Every score is linear in w, so the ranking is constant between
 * consecutive crossings of two score lines; each piece's length goes to the ranks it gives.
 * Rows must be distinct (no ties of positive length).
 */
function exactTwoCriteria(table: NormalisedTable): { b: number[][], central: (number | null)[] } {
  const { n, values } = table
  const score = (i: number, w: number) => w * values[2 * i]! + (1 - w) * values[2 * i + 1]!
  const cuts = [0, 1]
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      // S_i − S_j = (d0 − d1)·w + d1 = 0
      const d0 = values[2 * i]! - values[2 * j]!
      const d1 = values[2 * i + 1]! - values[2 * j + 1]!
      if (d0 !== d1) {
        const w = -d1 / (d0 - d1)
        if (w > 0 && w < 1) cuts.push(w)
      }
    }
  }
  cuts.sort((x, y) => x - y)
  const b = Array.from({ length: n }, () => new Array<number>(n).fill(0))
  const moment = new Array<number>(n).fill(0)
  for (let c = 0; c + 1 < cuts.length; c++) {
    const lo = cuts[c]!
    const hi = cuts[c + 1]!
    if (hi - lo <= 0) continue
    const mid = (lo + hi) / 2
    const order = Array.from({ length: n }, (_, i) => i).sort((x, y) => score(y, mid) - score(x, mid))
    order.forEach((i, r) => {
      b[i]![r] = b[i]![r]! + (hi - lo)
    })
    moment[order[0]!] = moment[order[0]!]! + (hi * hi - lo * lo) / 2
  }
  return { b, central: moment.map((m, i) => (b[i]![0]! > 0 ? m / b[i]![0]! : null)) }
}

function expectWithinErrors(estimate: number, exact: number, samples: number, slack = 0): void {
  const se = Math.sqrt(exact * (1 - exact) / samples)
  expect(Math.abs(estimate - exact)).toBeLessThanOrEqual(4 * se + slack + 1e-12)
}

function expectStochastic(result: AcceptabilityResult): void {
  const n = result.alternativeIds.length
  for (let i = 0; i < n; i++) {
    expect(result.rankAcceptability[i]!.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 9)
    expect(result.rankAcceptability.reduce((sum, row) => sum + row[i]!, 0)).toBeCloseTo(1, 9)
  }
}

describe('the weight sampler', () => {
  it('scipy can be imported by /usr/bin/python3', () => {
    const run = spawnSync(PYTHON, ['-c', 'import scipy; print(scipy.__version__)'], { encoding: 'utf8' })
    expect(run.status, run.stderr).toBe(0)
  })

  it.each([2, 3, 4, 6])('p = %i: each coordinate follows Beta(1, p − 1) (scipy.stats.kstest)', (p) => {
    const random = mulberry32(20_261_202 + p)
    const draws = 20_000
    const w = new Float64Array(p)
    const first: number[] = []
    const last: number[] = []
    for (let t = 0; t < draws; t++) {
      sampleSimplex(random, w)
      expect(Math.abs(w.reduce((a, b) => a + b, 0) - 1)).toBeLessThan(1e-12)
      first.push(w[0]!)
      last.push(w[p - 1]!)
    }
    expect(scipyKsBeta(first, 1, p - 1)).toBeGreaterThan(0.001)
    expect(scipyKsBeta(last, 1, p - 1)).toBeGreaterThan(0.001)
  })

  it('the check can fail: normalised uniforms (not uniform on the simplex) are rejected by scipy', () => {
    const random = mulberry32(99)
    const p = 3
    const coordinate: number[] = []
    for (let t = 0; t < 20_000; t++) {
      const u = [random(), random(), random()]
      coordinate.push(u[0]! / (u[0]! + u[1]! + u[2]!))
    }
    expect(scipyKsBeta(coordinate, 1, p - 1)).toBeLessThan(1e-6)
  })

  it('mulberry32 gives the same stream for the same seed, and values in [0, 1)', () => {
    const a = mulberry32(42)
    const b = mulberry32(42)
    const c = mulberry32(43)
    const xs = Array.from({ length: 1000 }, () => a())
    expect(Array.from({ length: 1000 }, () => b())).toEqual(xs)
    expect(Array.from({ length: 1000 }, () => c())).not.toEqual(xs)
    for (const x of xs) expect(x >= 0 && x < 1).toBe(true)
  })
})

describe('acceptability, two criteria (exact: lengths on the weight segment)', () => {
  // Maximised, a concave front plus (4, 7.5), which lies below the segment (3, 9)–(6, 7) at
  // x = 4 (y = 8.33 there): efficient but unsupported.
  const table = efficientTable(['max', 'max'], [[0, 10], [3, 9], [6, 7], [8, 4], [10, 0], [4, 7.5]])
  const samples = 40_000
  const result = acceptability(table, { seed: 7, samples })
  const exact = exactTwoCriteria(table)

  it('every rank acceptability agrees with the exact interval lengths within 4 standard errors', () => {
    expect(table.n).toBe(6)
    for (let i = 0; i < table.n; i++) {
      for (let r = 0; r < table.n; r++) expectWithinErrors(result.rankAcceptability[i]![r]!, exact.b[i]![r]!, samples)
    }
    expectStochastic(result)
  })

  it('weightLine gives the same exact first-rank intervals and centres', () => {
    const line = weightLine(table)
    line.segments.forEach((segment, i) => {
      expect(segment.share).toBeCloseTo(exact.b[i]![0]!, 12)
      if (exact.central[i] === null) expect(segment.interval).toBeNull()
      else expect(segment.centre).toBeCloseTo(exact.central[i]!, 12)
    })
  })

  it('the unsupported alternative has first-rank acceptability exactly 0, but other ranks', () => {
    const i = table.alternativeIds.indexOf('a5')
    expect(exact.b[i]![0]).toBe(0)
    expect(result.firstRank[i]).toBe(0)
    expect(result.centralWeights[i]).toBeNull()
    expect(result.rankAcceptability[i]!.slice(1).some(x => x > 0)).toBe(true)
  })

  it('central weights are the midpoints of the winning intervals, within their stated error', () => {
    for (let i = 0; i < table.n; i++) {
      const c = exact.central[i]
      if (c === null || c === undefined) continue
      const estimate = result.centralWeights[i]!
      const error = result.centralWeightError[i]!
      expect(estimate.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12)
      expect(Math.abs(estimate[0]! - c)).toBeLessThanOrEqual(4 * error[0]! + 1e-12)
    }
  })

  it('the standard errors are sqrt(a(1 − a)/N)', () => {
    result.firstRank.forEach((a, i) => expect(result.firstRankError[i]).toBeCloseTo(Math.sqrt(a * (1 - a) / samples), 15))
  })
})

describe('acceptability, three criteria (exact: polygon areas of weightMap)', () => {
  // Maximised; a1 is a convex combination of a0, a2 and a4 along an edge, so it only ties.
  const rows = [[10, 0, 2], [5, 5, 1], [0, 10, 0], [3, 3, 9], [2, 8, 6], [7, 2, 7], [0, 0, 10], [6, 6, 4]]
  const table = efficientTable(['max', 'max', 'max'], rows)
  const samples = 40_000

  it('first-rank acceptabilities equal the area shares within 4 standard errors; central weights the centroids', () => {
    const map = weightMap(table)
    const result = acceptability(table, { seed: 11, samples })
    map.regions.forEach((region, i) => {
      expect(region.alternativeId).toBe(result.alternativeIds[i])
      expectWithinErrors(result.firstRank[i]!, region.share, samples)
      if (region.share > 0.02) {
        const error = result.centralWeightError[i]!
        result.centralWeights[i]!.forEach((w, k) => expect(Math.abs(w - region.centroid![k]!)).toBeLessThanOrEqual(4 * error[k]! + 1e-12))
      }
    })
    expectStochastic(result)
  })

  it('the submitted region: uniform on the box of submitted weights, against the cut polygons', () => {
    const submitted = [[0.5, 0.3, 0.2], [2, 5, 3], [0.3, 0.2, 0.5]]
    const result = acceptability(table, { seed: 12, samples, region: 'submitted', submitted })
    expect(result.region).toMatchObject({ kind: 'submitted', lower: [0.2, 0.2, 0.2], upper: [0.5, 0.5, 0.5], stakeholders: 3, singlePoint: false, fallbackDraws: 0 })
    const map = weightMap(table, { bounds: { lower: [0.2, 0.2, 0.2], upper: [0.5, 0.5, 0.5] } })
    map.regions.forEach((region, i) => expectWithinErrors(result.firstRank[i]!, region.share, samples))
    // Every central weight is a mean of draws inside the box.
    for (const c of result.centralWeights) {
      if (c === null) continue
      for (const w of c) expect(w >= 0.2 - 1e-12 && w <= 0.5 + 1e-12).toBe(true)
    }
    expectStochastic(result)
  })
})

describe('acceptability: laws and edge cases', () => {
  it('property: rows and columns of the rank acceptability matrix sum to 1 (ties, duplicates, both models)', () => {
    fc.assert(fc.property(matrixArb({ minN: 1, maxN: 9, minP: 1, maxP: 4, grid: 4 }), fc.boolean(), fc.nat(1000), ({ directions, rows }, reference, seed) => {
      const t = efficientTable(directions, rows)
      const result = acceptability(t, { seed, samples: 200, model: reference ? 'reference-point' : 'weighted-sum' })
      expectStochastic(result)
    }), { numRuns: 120 })
  })

  it('a dominated alternative has acceptability 0 (table with all rows) and is left out of an analysis', () => {
    // a2 = (4, 4) is dominated by a1 = (5, 5) (maximised); every draw ranks a1 above a2.
    const raw = [10, 0, 5, 5, 4, 4, 0, 10]
    const table = normaliseTable(['c0', 'c1'], ['max', 'max'], ['a0', 'a1', 'a2', 'a3'], raw, [10, 10], [0, 0])
    const result = acceptability(table, { seed: 3, samples: 5000 })
    expect(result.firstRank[2]).toBe(0)
    expect(result.rankAcceptability[2]![0]).toBe(0)
    expect(result.rankAcceptability[2]![1]).toBe(0)
    expectStochastic(result)

    const ledger = ledgerOf(['max', 'max'], [[10, 0], [5, 5], [4, 4], [0, 10]])
    const analysis = analyseLedger(ledger.criteria, ledger.alternatives, { support: false })
    const fromAnalysis = acceptability(analysis, { seed: 3, samples: 1000 })
    expect(fromAnalysis.alternativeIds).toEqual(['a0', 'a1', 'a3'])
    expect(fromAnalysis.notEfficientIds).toEqual(['a2'])
  })

  it('an unsupported efficient alternative: 0 by weighted sum, about ¼ by reference point (worked by hand)', () => {
    // Minimised; normalised a0 = (1, 0), a1 = (0, 1), a2 = (0.4, 0.4). With the ideal as the
    // reference the Tchebycheff shortfalls are a0: w₂, a1: w₁, a2: 0.6·max(w₁, w₂); a2 ranks
    // first iff 0.6·max < min, i.e. w₁ ∈ (0.375, 0.625): probability ¼ exactly. a0 needs
    // w₂ < 0.6·w₁, i.e. w₁ > 0.625: probability 0.375, and a1 likewise.
    const ledger = ledgerOf(['min', 'min'], [[0, 10], [10, 0], [6, 6]])
    const analysis = analyseLedger(ledger.criteria, ledger.alternatives)
    expect(analysis.alternatives[2]).toMatchObject({ status: 'efficient', supported: false })
    const samples = 20_000
    const sum = acceptability(analysis, { seed: 5, samples })
    expect(sum.firstRank[2]).toBe(0)
    const reference = acceptability(analysis, { seed: 5, samples, model: 'reference-point' })
    expect(reference.model).toBe('reference-point')
    expectWithinErrors(reference.firstRank[2]!, 0.25, samples)
    expectWithinErrors(reference.firstRank[0]!, 0.375, samples)
    expectWithinErrors(reference.firstRank[1]!, 0.375, samples)
    expect(Math.abs(reference.centralWeights[2]![0]! - 0.5)).toBeLessThanOrEqual(4 * reference.centralWeightError[2]![0]! + 1e-12)
    expectStochastic(reference)
  })

  it('an aspiration point moves the reference-point acceptabilities', () => {
    const ledger = ledgerOf(['min', 'min'], [[0, 10], [10, 0], [6, 6]])
    const analysis = analyseLedger(ledger.criteria, ledger.alternatives, { support: false })
    // Aspire to (0, 10) itself: a0 meets it, so its shortfall is 0 and it always ranks first.
    const result = acceptability(analysis, { seed: 6, samples: 2000, model: 'reference-point', aspiration: [0, 10] })
    expect(result.firstRank).toEqual([1, 0, 0])
    expect(() => acceptability(analysis, { model: 'reference-point', aspiration: [1] })).toThrow(RangeError)
  })

  it('identical alternatives split their credit evenly', () => {
    const table = efficientTable(['max', 'max'], [[10, 0], [0, 10], [10, 0]])
    const result = acceptability(table, { seed: 8, samples: 10_000 })
    expect(result.firstRank[0]).toBe(result.firstRank[2])
    expectWithinErrors(result.firstRank[0]!, 0.25, 10_000)
    expectStochastic(result)
  })

  it('reproduces from the returned seed, whatever the chunking, and reports progress', () => {
    const table = efficientTable(['max', 'max', 'min'], [[1, 2, 3], [3, 1, 2], [2, 3, 1], [2, 2, 2]])
    const progress: [number, number][] = []
    const whole = acceptability(table, { samples: 2500, chunk: 1000, onProgress: (done, total) => progress.push([done, total]) })
    expect(progress).toEqual([[1000, 2500], [2000, 2500], [2500, 2500]])
    expect(Number.isInteger(whole.seed) && whole.seed >= 0 && whole.seed < 2 ** 32).toBe(true)
    const again = acceptability(table, { samples: 2500, seed: whole.seed })
    expect(again).toEqual(whole)
    const run = startAcceptability(table, { samples: 2500, seed: whole.seed })
    while (run.done < run.total) run.step(7)
    expect(run.result()).toEqual(whole)
    expect(acceptability(table, { samples: 2500, seed: (whole.seed + 1) % 2 ** 32 })).not.toEqual(whole)
  })

  it('the async runner yields between chunks, gives the same result, and can be stopped', async () => {
    const table = efficientTable(['max', 'max', 'min'], [[1, 2, 3], [3, 1, 2], [2, 3, 1], [2, 2, 2]])
    const whole = acceptability(table, { samples: 3000, seed: 4 })
    let ticks = 0
    const timer = setInterval(() => ticks++, 0)
    const progress: number[] = []
    const result = await acceptabilityAsync(table, { samples: 3000, seed: 4, chunk: 500, onProgress: done => progress.push(done) })
    clearInterval(timer)
    expect(result).toEqual(whole)
    expect(progress).toEqual([500, 1000, 1500, 2000, 2500, 3000])
    expect(ticks).toBeGreaterThan(0)
    const controller = new AbortController()
    const stopped = acceptabilityAsync(table, { samples: 3000, seed: 4, chunk: 500, signal: controller.signal, onProgress: (done) => {
      if (done === 1000) controller.abort()
    } })
    await expect(stopped).rejects.toThrow(/abort/i)
  })

  it('one stakeholder: the submitted region is a point, and its favourite has acceptability 1', () => {
    const table = efficientTable(['max', 'max', 'max'], [[10, 0, 0], [0, 10, 0], [0, 0, 10]])
    const result = acceptability(table, { seed: 1, samples: 100, region: 'submitted', submitted: [[1, 2, 7]] })
    expect(result.region).toMatchObject({ kind: 'submitted', singlePoint: true })
    expect(weightedSumFavourite(table, [1, 2, 7]).winners).toEqual(['a2'])
    expect(result.firstRank).toEqual([0, 0, 1])
  })

  it('the fallback: draws rejected too often come from mixtures of the submitted weightings', () => {
    const table = efficientTable(['max', 'max', 'max'], [[10, 0, 0], [0, 10, 0], [0, 0, 10], [4, 4, 4]])
    const submitted = [[0.6, 0.3, 0.1], [0.1, 0.3, 0.6], [0.3, 0.6, 0.1]]
    const result = acceptability(table, { seed: 2, samples: 2000, region: 'submitted', submitted, maxAttempts: 1 })
    const region = result.region
    expect(region.kind).toBe('submitted')
    if (region.kind !== 'submitted') return
    expect(region.fallbackDraws).toBeGreaterThan(0)
    expect(region.attempts).toBe(2000)
    for (const c of result.centralWeights) {
      if (c === null) continue
      c.forEach((w, k) => expect(w >= region.lower[k]! - 1e-12 && w <= region.upper[k]! + 1e-12).toBe(true))
    }
    expectStochastic(result)
  })

  it.each<[string, Parameters<typeof acceptability>[1]]>([
    ['zero samples', { samples: 0 }],
    ['a fractional sample count', { samples: 10.5 }],
    ['a negative seed', { seed: -1 }],
    ['a seed beyond 32 bits', { seed: 2 ** 32 }],
    ['the submitted region with no weightings', { region: 'submitted' }],
    ['a bad submitted weighting', { region: 'submitted', submitted: [[1, -1]] }],
    ['an unknown region', { region: 'box' as never }],
    ['an unknown model', { model: 'vote' as never }],
    ['a zero chunk', { chunk: 0 }],
  ])('rejects %s with a RangeError', (_, options) => {
    const table = efficientTable(['max', 'max'], [[1, 0], [0, 1]])
    expect(() => acceptability(table, options)).toThrow(RangeError)
  })

  it('an empty table gives empty results', () => {
    const table = efficientTable(['max', 'max'], [])
    const result = acceptability(table, { seed: 1, samples: 10 })
    expect(result.alternativeIds).toEqual([])
    expect(result.rankAcceptability).toEqual([])
    expect(result.samples).toBe(10)
  })
})
