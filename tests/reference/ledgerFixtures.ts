/**
 * Builders and fast-check arbitraries for the analysis-layer tests. Scores are drawn from small
 * integer grids on purpose: ties, duplicates, collinear points and weakly dominated rows then
 * turn up often, and every comparison the tests make is exact.
 */
import fc from 'fast-check'
import type { Alternative, Criterion, Direction } from '../../shared/types/decision'
import { idealAndNadir, normaliseTable } from '../../shared/utils/normalise'
import { canonicalise, paretoSets } from '../../shared/utils/pareto'
import type { NormalisedTable } from '../../shared/types/engine'

export interface Ledger {
  criteria: Criterion[]
  alternatives: Alternative[]
}

/** Criteria c0…c(p−1) with the given directions; alternatives a0…a(n−1) with the given rows. */
export function ledgerOf(
  directions: readonly Direction[],
  rows: readonly (readonly number[])[],
  limits: readonly ({ lowest?: number | null, highest?: number | null } | undefined)[] = [],
): Ledger {
  const criteria: Criterion[] = directions.map((direction, k) => ({
    id: `c${k}`,
    name: `Criterion ${k}`,
    unit: 'u',
    direction,
    ...limits[k],
  }))
  const alternatives: Alternative[] = rows.map((row, i) => ({
    id: `a${i}`,
    name: `Alternative ${i}`,
    scores: Object.fromEntries(row.map((x, k) => [`c${k}`, x])),
  }))
  return { criteria, alternatives }
}

/**
 * The normalised table of the efficient rows of a matrix, built straight from pareto.ts and
 * normalise.ts (no ledger), for tests of the scalarising functions. Row ids are `a<row>`.
 */
export function efficientTable(directions: readonly Direction[], rows: readonly (readonly number[])[]): NormalisedTable {
  const p = directions.length
  const n = rows.length
  const raw = Float64Array.from(rows.flat())
  const sets = paretoSets(canonicalise(raw, n, p, directions), n, p)
  const kept: number[] = []
  for (let i = 0; i < n; i++) if (sets.efficient[i] === 1) kept.push(i)
  const range = idealAndNadir(raw, n, p, directions, sets.efficient)
  return normaliseTable(
    directions.map((_, k) => `c${k}`),
    directions,
    kept.map(i => `a${i}`),
    Float64Array.from(kept.flatMap(i => rows[i]!)),
    range?.best ?? new Float64Array(p),
    range?.worst ?? new Float64Array(p),
  )
}

export const directionArb: fc.Arbitrary<Direction> = fc.constantFrom('min', 'max')

/** A score matrix: p criteria with directions, n rows of integers in [0, grid). */
export function matrixArb(options: { minN?: number, maxN?: number, minP?: number, maxP?: number, grid?: number } = {}) {
  const { minN = 0, maxN = 12, minP = 1, maxP = 4, grid = 6 } = options
  return fc.integer({ min: minP, max: maxP }).chain(p =>
    fc.record({
      directions: fc.array(directionArb, { minLength: p, maxLength: p }),
      rows: fc.array(fc.array(fc.integer({ min: 0, max: grid - 1 }), { minLength: p, maxLength: p }), { minLength: minN, maxLength: maxN }),
    }),
  )
}

/** A valid ledger, sometimes with hard limits that cut some alternatives off. */
export function ledgerArb(options: { minN?: number, maxN?: number, minP?: number, maxP?: number, grid?: number } = {}): fc.Arbitrary<Ledger> {
  const grid = options.grid ?? 6
  return matrixArb(options).chain(({ directions, rows }) =>
    fc.array(
      fc.option(fc.record({
        lowest: fc.option(fc.integer({ min: 0, max: grid - 1 }), { nil: null }),
        highest: fc.option(fc.integer({ min: grid - 3, max: grid - 1 }), { nil: null }),
      }).filter(l => l.lowest == null || l.highest == null || l.lowest <= l.highest), { nil: undefined }),
      { minLength: directions.length, maxLength: directions.length },
    ).map(limits => ledgerOf(directions, rows, limits)),
  )
}

/** A weight vector of length p: non-negative integers, not all zero. */
export function weightsArb(p: number): fc.Arbitrary<number[]> {
  return fc.array(fc.integer({ min: 0, max: 9 }), { minLength: p, maxLength: p }).filter(w => w.some(x => x > 0))
}
