/**
 * Reference-point mode helpers (shared/utils/aspirations.ts).
 *
 * Outside references:
 *  - The favourite for targets is checked against NumPy (Debian python3-numpy, /usr/bin/python3):
 *    a plain reimplementation there of min–max normalisation over the efficient rows and the
 *    equal-weight Tchebycheff shortfall max_k (r_k − v_ik) with the total shortfall as tie-break.
 *  - The group's targets are checked against numpy.median per column.
 * The sea-front ledger (also used by tests/e2e/weigh-console.spec.ts) is worked by hand below.
 */
import { spawnSync } from 'node:child_process'
import { describe, expect, it } from 'vitest'
import type { Alternative, Criterion, Direction } from '../../../../shared/types/decision'
import {
  achievementWeights,
  aspirationFavourite,
  aspirationProblem,
  aspirationScales,
  aspirationWords,
  medianAspiration,
  unsupportedAmong,
} from '../../../../shared/utils/aspirations'
import { analyseLedger } from '../../../../shared/utils/ledger'
import { weightedSumFavourite } from '../../../../shared/utils/scalarise'

const PYTHON = '/usr/bin/python3'

const seaFront: { criteria: Criterion[], alternatives: Alternative[] } = {
  criteria: [
    { id: 'cost', name: 'Capital cost', unit: '£m', direction: 'min', highest: 30, precision: 1 },
    { id: 'homes', name: 'Homes protected', unit: 'homes', direction: 'max', precision: 0 },
  ],
  alternatives: [
    { id: 'wall', name: 'North Wall', scores: { cost: 10, homes: 100 } },
    { id: 'dunes', name: 'Dune Nourishment', scores: { cost: 20, homes: 150 } },
    { id: 'barrier', name: 'Tidal Barrier', scores: { cost: 30, homes: 300 } },
    { id: 'reef', name: 'Offshore Reef', scores: { cost: 31.5, homes: 400 } },
    { id: 'groynes', name: 'Groyne Field', scores: { cost: 25, homes: 120 } },
    { id: 'retreat', name: 'Managed Retreat', scores: { cost: 10, homes: 90 } },
  ],
}
const sea = analyseLedger(seaFront.criteria, seaFront.alternatives)

describe('aspirationScales', () => {
  it('spans the efficient alternatives and accepts that range widened by its width on each side', () => {
    // Efficient: wall (10, 100), dunes (20, 150), barrier (30, 300); reef is over the cost limit.
    expect(aspirationScales(sea)).toEqual([
      { criterionId: 'cost', direction: 'min', efficientLow: 10, efficientHigh: 30, low: -10, high: 50, step: 0.1 },
      { criterionId: 'homes', direction: 'max', efficientLow: 100, efficientHigh: 300, low: -100, high: 500, step: 1 },
    ])
  })

  it('gives a criterion on which the shortlist agrees a margin of max(1, |value|) and a round step', () => {
    const analysis = analyseLedger(
      [{ id: 'a', name: 'A', unit: '', direction: 'max' }, { id: 'b', name: 'B', unit: 'kg', direction: 'min' }],
      [{ id: 'x', name: 'X', scores: { a: 1, b: 0.5 } }, { id: 'y', name: 'Y', scores: { a: 2, b: 0.5 } }, { id: 'z', name: 'Z', scores: { a: 5000, b: 0.5 } }],
    )
    // Only z is efficient (b ties, a is highest): both ranges collapse to z's values.
    const [a, b] = aspirationScales(analysis)
    expect(a).toMatchObject({ efficientLow: 5000, efficientHigh: 5000, low: 0, high: 10_000, step: 1 })
    expect(b).toMatchObject({ efficientLow: 0.5, efficientHigh: 0.5, low: -0.5, high: 1.5 })
  })
})

describe('aspirationProblem', () => {
  it.each([
    [[20, 150], null],
    [[-10, 500], null],
    [[50, -100], null],
    [[20], 'Expected 2 targets (one per criterion), got 1.'],
    [[20, 150, 1], 'Expected 2 targets (one per criterion), got 3.'],
    [[Number.NaN, 150], 'The target for “Capital cost” is not a finite number.'],
    [[20, Number.POSITIVE_INFINITY], 'The target for “Homes protected” is not a finite number.'],
    [[50.5, 150], 'The target for “Capital cost” (50.5 £m) is outside the accepted range -10 £m to 50 £m; the shortlist spans 10 £m to 30 £m.'],
    [[20, 9000], 'The target for “Homes protected” (9,000 homes) is outside the accepted range -100 homes to 500 homes; the shortlist spans 100 homes to 300 homes.'],
  ])('targets %j → %s', (targets, message) => {
    const problem = aspirationProblem(sea, targets)
    if (message === null) expect(problem).toBeNull()
    else expect(problem?.message).toBe(message)
  })

  it('names the criterion of an out-of-range target', () => {
    expect(aspirationProblem(sea, [20, 9000])?.criterionId).toBe('homes')
    expect(aspirationProblem(sea, [20])?.criterionId).toBeNull()
  })
})

describe('aspirationFavourite on the sea-front ledger', () => {
  // Normalised over the efficient set (1 = best): cost wall 1, dunes 0.5, barrier 0; homes wall 0,
  // dunes 0.25, barrier 1. Targets cost ≤ 20, homes ≥ 150 are (0.5, 0.25): largest shortfalls
  // wall max(−0.5, 0.25) = 0.25, dunes 0, barrier max(0.5, −0.75) = 0.5 (worked by hand).
  it('names Dune Nourishment, which no weighting of sliders favours', () => {
    const favourite = aspirationFavourite(sea, [20, 150])
    expect(favourite.winners).toEqual(['dunes'])
    expect(favourite.runnersUp).toEqual(['wall'])
    expect(favourite.weights).toEqual([0.5, 0.5])
    expect(favourite.scores.map(x => x * 2)).toEqual([0.25, 0, 0.5]) // equal weights halve each shortfall
    expect(unsupportedAmong(sea, favourite.winners)).toEqual(['dunes'])
    // No weighting of a sum picks it: a fine sweep of the weight line (the LP says the same).
    for (let j = 0; j <= 1000; j++) {
      expect(weightedSumFavourite(sea, [j / 1000, 1 - j / 1000]).winners).not.toContain('dunes')
    }
  })

  it('names supported alternatives for targets near them', () => {
    expect(aspirationFavourite(sea, [10, 100]).winners).toEqual(['wall'])
    expect(aspirationFavourite(sea, [30, 300]).winners).toEqual(['barrier'])
    expect(unsupportedAmong(sea, ['wall', 'barrier'])).toEqual([])
  })

  it('follows the verdicts, and claims nothing where support was not worked out', () => {
    const full = analyseLedger(seaFront.criteria, seaFront.alternatives)
    expect(unsupportedAmong(full, ['wall', 'dunes', 'barrier', 'nobody'])).toEqual(['dunes'])
    const quick = analyseLedger(seaFront.criteria, seaFront.alternatives, { support: false })
    expect(quick.alternatives.find(v => v.id === 'dunes')?.supported).toBeNull()
    expect(unsupportedAmong(quick, ['wall', 'dunes', 'barrier'])).toEqual([])
  })

  it('uses equal weights', () => {
    expect(achievementWeights(4)).toEqual([0.25, 0.25, 0.25, 0.25])
  })
})

describe('aspirationWords', () => {
  it('reads "at most" when lower is better and "at least" when higher is better', () => {
    expect(aspirationWords(seaFront.criteria[0]!, 12)).toBe('at most 12.0 £m')
    expect(aspirationWords(seaFront.criteria[1]!, 900)).toBe('at least 900 homes')
  })
})

describe('medianAspiration', () => {
  it('takes the median of each criterion (mean of the middle two for an even count)', () => {
    expect(medianAspiration([[1, 10], [3, 30], [2, 50]], 2)).toEqual([2, 30])
    expect(medianAspiration([[1, 10], [4, 30]], 2)).toEqual([2.5, 20])
    expect(() => medianAspiration([], 2)).toThrow(RangeError)
    expect(() => medianAspiration([[1]], 2)).toThrow(RangeError)
  })
})

/** A small seeded generator (LCG, Numerical Recipes constants) so the cases are reproducible. */
function lcg(seed: number) {
  let state = seed >>> 0
  return () => {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0
    return state / 2 ** 32
  }
}

describe('against NumPy', () => {
  it('names the same favourite as a plain NumPy Tchebycheff, and the same medians', () => {
    const random = lcg(20261202)
    const cases: { directions: Direction[], rows: number[][], targets: number[], expected: number, points: number[][], median: number[] }[] = []
    for (let c = 0; c < 60; c++) {
      const p = 2 + Math.floor(random() * 3)
      const n = 3 + Math.floor(random() * 12)
      const directions: Direction[] = Array.from({ length: p }, () => (random() < 0.5 ? 'min' : 'max'))
      const criteria: Criterion[] = directions.map((direction, k) => ({ id: `c${k}`, name: `C${k}`, unit: '', direction }))
      const alternatives: Alternative[] = Array.from({ length: n }, (_, i) => ({
        id: `a${i}`,
        name: `A${i}`,
        scores: Object.fromEntries(criteria.map(cr => [cr.id, Math.round(random() * 1e6) / 1e3])),
      }))
      const analysis = analyseLedger(criteria, alternatives, { support: false })
      const scales = aspirationScales(analysis)
      const targets = scales.map(s => s.low + random() * (s.high - s.low))
      const points = Array.from({ length: 1 + Math.floor(random() * 6) }, () => scales.map(s => s.efficientLow + random() * (s.efficientHigh - s.efficientLow)))
      const rows = analysis.efficientIds.map(id => criteria.map(cr => alternatives.find(a => a.id === id)!.scores[cr.id]!))
      const winner = aspirationFavourite(analysis, targets).winners
      expect(winner).toHaveLength(1) // continuous random data: no ties
      cases.push({ directions, rows, targets, expected: analysis.efficientIds.indexOf(winner[0]!), points, median: medianAspiration(points, p) })
    }
    const script = `
import json, sys
import numpy as np
cases = json.load(sys.stdin)
out = []
for c in cases:
    x = np.array(c['rows'], dtype=float)
    t = np.array(c['targets'], dtype=float)
    lo, hi = x.min(axis=0), x.max(axis=0)
    best = np.where(np.array(c['directions']) == 'min', lo, hi)
    worst = np.where(np.array(c['directions']) == 'min', hi, lo)
    span = np.where(best == worst, 1.0, worst - best)
    v = np.where(best == worst, 1.0, (worst - x) / span)
    r = np.where(best == worst, 1.0, (worst - t) / span)
    short = r - v
    primary = short.max(axis=1) / x.shape[1]
    secondary = short.sum(axis=1)
    order = np.lexsort((secondary, primary))
    out.append({'winner': int(order[0]), 'median': np.median(np.array(c['points']), axis=0).tolist()})
print(json.dumps(out))
`
    const run = spawnSync(PYTHON, ['-c', script], { input: JSON.stringify(cases), encoding: 'utf8', timeout: 60_000 })
    if (run.status !== 0) throw new Error(`numpy check failed (is python3-numpy installed?): ${run.stderr.trim()}`)
    const reference = JSON.parse(run.stdout) as { winner: number, median: number[] }[]
    reference.forEach((ref, c) => {
      expect(cases[c]!.expected, `case ${c}`).toBe(ref.winner)
      cases[c]!.median.forEach((m, k) => expect(m).toBeCloseTo(ref.median[k]!, 10))
    })
  })
})
