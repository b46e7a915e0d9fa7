/**
 * Outside reference for the efficient set: DEAP (Distributed Evolutionary Algorithms in Python),
 * Debian package python3-deap, function `deap.tools.sortLogNondominated(pop, k=len(pop),
 * first_front_only=True)`, driven by tests/reference/deap_front.py.
 *
 * Duplicates: sortLogNondominated groups individuals by their exact weighted fitness tuple before
 * sorting and gives every copy the tuple's front (deap/tools/emo.py), so it treats equal vectors as
 * mutually non-dominating, like paretoSets: every copy of an efficient vector is efficient.
 * DEAP's function needs at least two objectives (with one it raises IndexError), so p ≥ 2 here;
 * p = 1 is covered against the O(n²·p) reference in pareto.test.ts.
 *
 * The test fails, never skips, when /usr/bin/python3 cannot import deap: the test script installs
 * python3-deap, so a missing package is a broken machine.
 */
import { spawnSync } from 'node:child_process'
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { Direction } from '../../../../shared/types/decision'
import { canonicalise, paretoSets } from '../../../../shared/utils/pareto'

const PYTHON = '/usr/bin/python3'
const SCRIPT = fileURLToPath(new URL('../../../reference/deap_front.py', import.meta.url))

interface Case {
  n: number
  p: number
  directions: Direction[]
  scores: number[]
}

interface DeapAnswer {
  deap: string
  results: { front: number[], seconds: number }[]
}

function runDeap(cases: Case[]): DeapAnswer {
  const dir = mkdtempSync(join(tmpdir(), 'counterpoise-deap-'))
  try {
    const file = join(dir, 'cases.json')
    writeFileSync(file, JSON.stringify({ cases }))
    const run = spawnSync(PYTHON, [SCRIPT, file], { encoding: 'utf8', maxBuffer: 64 * 1024 * 1024, timeout: 120_000 })
    if (run.error) throw new Error(`cannot run ${PYTHON} ${SCRIPT}: ${run.error.message}`)
    if (run.status !== 0) {
      throw new Error(`${PYTHON} ${SCRIPT} exited with ${run.status}: ${run.stderr.trim()}`
        + (run.status === 3 ? ' — python3-deap is missing; install it with apt-get install -y python3-deap' : ''))
    }
    return JSON.parse(run.stdout) as DeapAnswer
  }
  finally {
    rmSync(dir, { recursive: true, force: true })
  }
}

function ourFront(c: Case): number[] {
  const sets = paretoSets(canonicalise(c.scores, c.n, c.p, c.directions), c.n, c.p)
  const front: number[] = []
  sets.efficient.forEach((flag, i) => {
    if (flag === 1) front.push(i)
  })
  return front
}

/** Deterministic PRNG (mulberry32) for the larger sets. */
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

/** Small integer scores (many ties and exact duplicates, some −0) with mixed directions. */
const tiedCase: fc.Arbitrary<Case> = fc
  .record({ n: fc.integer({ min: 0, max: 60 }), p: fc.integer({ min: 2, max: 6 }), top: fc.integer({ min: 1, max: 4 }) })
  .chain(({ n, p, top }) => fc.record({
    n: fc.constant(n),
    p: fc.constant(p),
    directions: fc.array(fc.constantFrom<Direction>('min', 'max'), { minLength: p, maxLength: p }),
    scores: fc.array(fc.integer({ min: -top, max: top }).map(v => (v === 0 ? -0 : v)), { minLength: n * p, maxLength: n * p }),
  }))

function largeCase(seed: number, n: number, p: number, shape: 'integers' | 'uniform' | 'anti-correlated'): Case {
  const random = prng(seed)
  const directions = Array.from({ length: p }, () => (random() < 0.5 ? 'min' : 'max') as Direction)
  const scores: number[] = []
  for (let i = 0; i < n; i++) {
    const row = Array.from({ length: p }, () => (shape === 'integers' ? Math.floor(random() * 4) : random()))
    if (shape === 'anti-correlated') {
      // Near the plane Σ (canonical score) = const, so most rows are efficient.
      const mean = row.reduce((a, b) => a + b, 0) / p
      for (let d = 0; d < p; d++) row[d] = (row[d]! - mean) * (directions[d] === 'max' ? -1 : 1)
    }
    scores.push(...row)
  }
  return { n, p, directions, scores }
}

describe('efficient set against DEAP sortLogNondominated (python3-deap)', () => {
  it('DEAP can be imported by /usr/bin/python3', () => {
    const run = spawnSync(PYTHON, ['-c', 'import deap.tools; print(deap.__version__)'], { encoding: 'utf8' })
    expect(run.error, `cannot start ${PYTHON}`).toBeUndefined()
    expect(run.status, `${PYTHON} cannot import deap (install python3-deap): ${run.stderr}`).toBe(0)
  })

  it('agrees on hand-made ties, duplicates and a weakly efficient row', () => {
    const cases: Case[] = [
      // (1,3) is dominated by (1,2) but weakly efficient; both copies of (1,2) are efficient.
      { n: 4, p: 2, directions: ['min', 'min'], scores: [1, 2, 1, 3, 1, 2, 0, 9] },
      { n: 3, p: 2, directions: ['max', 'min'], scores: [5, 5, 5, 5, 5, 5] },
      { n: 3, p: 3, directions: ['min', 'max', 'min'], scores: [0, 0, 0, -0, 0, 0, 1, 1, 1] },
      { n: 0, p: 2, directions: ['min', 'min'], scores: [] },
    ]
    const answer = runDeap(cases)
    expect(answer.results.map(r => r.front)).toEqual(cases.map(ourFront))
    expect(answer.results[0]!.front).toEqual([0, 2, 3])
  })

  it('agrees on 150 random tie-heavy sets with mixed directions (p = 2..6)', () => {
    const cases = fc.sample(tiedCase, { numRuns: 150, seed: 20240611 })
    const answer = runDeap(cases)
    expect(answer.results).toHaveLength(cases.length)
    cases.forEach((c, k) => {
      expect(ourFront(c), `case ${k}: ${JSON.stringify(c)}`).toEqual(answer.results[k]!.front)
    })
  })

  it('agrees on larger sets that reach the prefilter, the radix sort and the k-d trees', () => {
    const cases: Case[] = [
      largeCase(1, 1500, 2, 'integers'),
      largeCase(2, 1500, 2, 'anti-correlated'),
      largeCase(3, 1500, 3, 'uniform'),
      largeCase(4, 1500, 4, 'integers'),
      largeCase(5, 1200, 4, 'anti-correlated'),
      largeCase(6, 1500, 6, 'uniform'),
      largeCase(7, 800, 6, 'anti-correlated'),
      largeCase(8, 1500, 8, 'integers'),
    ]
    const answer = runDeap(cases)
    cases.forEach((c, k) => {
      const ours = ourFront(c)
      expect(ours.length, `case ${k} has an empty front`).toBeGreaterThan(0)
      expect(ours, `case ${k} (n=${c.n}, p=${c.p})`).toEqual(answer.results[k]!.front)
    })
  })
})
