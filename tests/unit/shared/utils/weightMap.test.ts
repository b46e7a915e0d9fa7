/**
 * The weight triangle (shared/utils/weightMap.ts).
 *
 * Outside reference: SciPy (Debian python3-scipy, installed by scripts/test.mjs). For each
 * alternative, its favourite region {t : S_a(t) ≥ S_b(t) for all b} in the (t₁, t₂) plane is
 * built by `scipy.spatial.HalfspaceIntersection` (interior point from the Chebyshev centre by
 * `scipy.optimize.linprog`) and measured by `scipy.spatial.ConvexHull(...).volume` (the area in
 * two dimensions). The test fails, never skips, when scipy cannot be imported.
 */
import { spawnSync } from 'node:child_process'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { NormalisedTable } from '../../../../shared/types/engine'
import { acceptability, mulberry32 } from '../../../../shared/utils/acceptability'
import { normaliseTable } from '../../../../shared/utils/normalise'
import { weightedSumFavourite } from '../../../../shared/utils/scalarise'
import { placeOnMap, TRIANGLE_HEIGHT, triangleWeights, trianglePoint, weightLine, weightMap } from '../../../../shared/utils/weightMap'
import { efficientTable, matrixArb } from '../../../reference/ledgerFixtures'

const PYTHON = '/usr/bin/python3'

const SCIPY_AREAS = `
import json, sys
import numpy as np
from scipy.optimize import linprog
from scipy.spatial import ConvexHull, HalfspaceIntersection

out = []
for u in json.load(sys.stdin):
    u = np.array(u, dtype=float)
    areas = []
    for a in range(len(u)):
        # Rows [A | b] meaning A·x + b <= 0 with x = (t1, t2), t0 = 1 - t1 - t2.
        rows = [[-1.0, 0.0, 0.0], [0.0, -1.0, 0.0], [1.0, 1.0, -1.0]]
        for b in range(len(u)):
            if b == a:
                continue
            d = u[a] - u[b]
            rows.append([-(d[1] - d[0]), -(d[2] - d[0]), -d[0]])
        h = np.array(rows)
        norms = np.linalg.norm(h[:, :2], axis=1)
        # Chebyshev centre: maximise r subject to A·x + r·|A| <= -b.
        res = linprog([0, 0, -1], A_ub=np.column_stack([h[:, :2], norms]), b_ub=-h[:, 2],
                      bounds=[(None, None), (None, None), (0, None)])
        if res.status != 0 or res.x[2] < 1e-9:
            areas.append(0.0)
            continue
        hs = HalfspaceIntersection(h, res.x[:2])
        areas.append(ConvexHull(hs.intersections).volume / 0.5)
    out.append(areas)
print(json.dumps(out))
`

function scipyAreaShares(tables: number[][][]): number[][] {
  const run = spawnSync(PYTHON, ['-c', SCIPY_AREAS], { input: JSON.stringify(tables), encoding: 'utf8', timeout: 120_000 })
  if (run.error) throw new Error(`cannot run ${PYTHON}: ${run.error.message}`)
  if (run.status !== 0) throw new Error(`scipy areas failed (is python3-scipy installed?): ${run.stderr.trim()}`)
  return JSON.parse(run.stdout) as number[][]
}

function rowsOf(table: NormalisedTable): number[][] {
  return Array.from({ length: table.n }, (_, i) => Array.from(table.values.subarray(i * table.p, i * table.p + table.p)))
}

/** Random efficient points: the positive part of the unit sphere (maximised), none dominating another. */
function sphereTable(n: number, seed: number): NormalisedTable {
  const random = mulberry32(seed)
  const rows: number[][] = []
  for (let i = 0; i < n; i++) {
    const x = [random() + 0.01, random() + 0.01, random() + 0.01]
    const r = Math.hypot(...x)
    rows.push(x.map(v => v / r))
  }
  return efficientTable(['max', 'max', 'max'], rows)
}

describe('weightMap against scipy (HalfspaceIntersection + ConvexHull)', () => {
  it('scipy can be imported by /usr/bin/python3', () => {
    const run = spawnSync(PYTHON, ['-c', 'import scipy.spatial, scipy.optimize'], { encoding: 'utf8' })
    expect(run.status, run.stderr).toBe(0)
  })

  it('area shares agree with scipy on random tables, and sum to 1', () => {
    const tables = [sphereTable(6, 1), sphereTable(12, 2), sphereTable(25, 3),
      efficientTable(['max', 'min', 'max'], [[10, 0, 2], [5, 5, 1], [0, 10, 0], [3, 3, 9], [2, 8, 6], [7, 2, 7], [0, 0, 10]])]
    const reference = scipyAreaShares(tables.map(rowsOf))
    tables.forEach((table, j) => {
      const map = weightMap(table)
      expect(map.regions.length).toBe(table.n)
      map.regions.forEach((region, i) => expect(region.areaShare).toBeCloseTo(reference[j]![i]!, 9))
      expect(map.regions.reduce((sum, r) => sum + r.share, 0)).toBeCloseTo(1, 12)
      // Some regions are empty and several are not, so the check is not vacuous.
      expect(map.regions.filter(r => r.areaShare > 0).length).toBeGreaterThan(2)
    })
  })
})

describe('weightMap', () => {
  it('three corner alternatives and a centre one (worked by hand)', () => {
    // Normalised a0 = (1,0,0), a1 = (0,1,0), a2 = (0,0,1), a3 = (0.4,0.4,0.4). a3 wins where
    // every t_c ≤ 0.4: the triangle t ≥ 0 cut by t_c ≤ 0.4, i.e. the small triangle
    // {t_c ≥ 0.6 − …}; in scaled coordinates it is the triangle with corners (0.4,0.4,0.2) etc.,
    // of side 0.2 of the unit triangle: share 0.2² = 0.04. Each corner gets (1 − 0.04)/3 = 0.32.
    const table = efficientTable(['max', 'max', 'max'], [[1, 0, 0], [0, 1, 0], [0, 0, 1], [0.4, 0.4, 0.4]])
    const map = weightMap(table)
    expect(map.criterionIds).toEqual(['c0', 'c1', 'c2'])
    expect(map.cornerShare).toBe(1)
    expect(map.regions.map(r => r.share).map(x => Number(x.toFixed(12)))).toEqual([0.32, 0.32, 0.32, 0.04])
    const centre = map.regions[3]!
    expect(centre.vertices.length).toBe(3)
    for (const v of centre.vertices) {
      expect([...v].sort().map(x => Number(x.toFixed(12)))).toEqual([0.2, 0.4, 0.4])
    }
    expect(centre.centroid!.map(x => Number(x.toFixed(12)))).toEqual([1 / 3, 1 / 3, 1 / 3].map(x => Number(x.toFixed(12))))
  })

  it('an alternative that only ties (collinear) has a degenerate region of zero area', () => {
    // (0.5, 0.5, 0) is the midpoint of a0 and a1: it ties with them on the segment t₀ = t₁ ≥ 0.4.
    const table = efficientTable(['max', 'max', 'max'], [[1, 0, 0], [0, 1, 0], [0, 0, 1], [0.4, 0.4, 0.4], [0.5, 0.5, 0]])
    const region = weightMap(table).regions[4]!
    expect(region.degenerate).toBe(true)
    expect(region.areaShare).toBe(0)
    expect(region.vertices.length).toBe(2)
    const ends = region.vertices.map(v => v.map(x => Number(x.toFixed(12)))).sort((x, y) => x[0]! - y[0]!)
    expect(ends).toEqual([[0.4, 0.4, 0.2], [0.5, 0.5, 0]])
    // Check by the engine itself: at a point of the segment it is among the winners.
    expect(weightedSumFavourite(table, [0.45, 0.45, 0.1]).winners).toContain('a4')
  })

  it('a dominated alternative has an empty region', () => {
    const raw = [10, 0, 0, 0, 10, 0, 0, 0, 10, 4, 4, 1, 5, 5, 2]
    const table = normaliseTable(['c0', 'c1', 'c2'], ['max', 'max', 'max'], ['a0', 'a1', 'a2', 'a3', 'a4'], raw, [10, 10, 10], [0, 0, 0])
    const map = weightMap(table)
    expect(map.regions[3]).toMatchObject({ vertices: [], areaShare: 0, share: 0, degenerate: false, centroid: null })
    expect(map.regions[4]!.areaShare).toBeGreaterThan(0)
  })

  it('identical alternatives share one polygon and split its share', () => {
    const table = efficientTable(['max', 'max', 'max'], [[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 0, 0]])
    const map = weightMap(table)
    expect(map.regions[0]!.vertices).toEqual(map.regions[3]!.vertices)
    expect(map.regions[0]!.sharedWith).toEqual(['a3'])
    expect(map.regions[3]!.sharedWith).toEqual(['a0'])
    expect(map.regions[0]!.areaShare).toBeCloseTo(1 / 3, 12)
    expect(map.regions[0]!.share).toBeCloseTo(1 / 6, 12)
    expect(map.regions.reduce((s, r) => s + r.share, 0)).toBeCloseTo(1, 12)
  })

  it('property: shares sum to 1 and the centroid of each region of positive area is favoured there', () => {
    fc.assert(fc.property(matrixArb({ minN: 1, maxN: 10, minP: 3, maxP: 3, grid: 5 }), ({ directions, rows }) => {
      const table = efficientTable(directions, rows)
      const map = weightMap(table)
      expect(map.regions.reduce((s, r) => s + r.share, 0)).toBeCloseTo(1, 9)
      for (const region of map.regions) {
        if (region.areaShare > 1e-9) expect(weightedSumFavourite(table, region.centroid!).winners).toContain(region.alternativeId)
      }
    }), { numRuns: 200 })
  })

  it('more criteria: the others are held at a weighting; regions match the favourites of the full weighting', () => {
    const random = mulberry32(77)
    const rows = Array.from({ length: 15 }, () => [random(), random(), random(), random(), random()])
    const table = efficientTable(['max', 'max', 'max', 'min', 'max'], rows)
    const held = [0.1, 0.2, 0.3, 0.25, 0.15]
    const map = weightMap(table, { criteria: ['c4', 'c0', 'c2'], held })
    expect(map.criterionIndices).toEqual([4, 0, 2])
    expect(map.cornerShare).toBeCloseTo(0.55, 12)
    expect(map.held.map(x => Number(x.toFixed(12)))).toEqual([0, 0.2, 0, 0.25, 0])
    expect(map.regions.reduce((s, r) => s + r.share, 0)).toBeCloseTo(1, 12)
    let checked = 0
    for (const region of map.regions) {
      if (region.areaShare < 1e-9) continue
      const [t0, t1, t2] = region.centroid!
      const full = [...map.held]
      full[4] = map.cornerShare * t0
      full[0] = map.cornerShare * t1
      full[2] = map.cornerShare * t2
      expect(weightedSumFavourite(table, full).winners).toContain(region.alternativeId)
      checked++
    }
    expect(checked).toBeGreaterThan(1)
    // And the shares are the first-rank acceptabilities along that slice (Monte Carlo, 4 s.e.).
    const samples = 20_000
    // The slice as a three-criterion table (scale 0–1 kept as is: best 1, worst 0).
    const slice = Array.from({ length: table.n }, (_, i) => {
      const v = (k: number) => table.values[i * 5 + k]!
      const rest = 0.2 * v(1) + 0.25 * v(3)
      return [0.55 * v(4) + rest, 0.55 * v(0) + rest, 0.55 * v(2) + rest]
    }).flat()
    const cut = normaliseTable(['c4', 'c0', 'c2'], ['max', 'max', 'max'], table.alternativeIds, slice, [1, 1, 1], [0, 0, 0])
    const mc = acceptability(cut, { seed: 9, samples })
    map.regions.forEach((r, i) => expect(Math.abs(mc.firstRank[i]! - r.share)).toBeLessThanOrEqual(4 * Math.sqrt(r.share * (1 - r.share) / samples) + 1e-12))
  })

  it('bounds cut the triangle: the box 0.2 ≤ t ≤ 0.5 is a hexagon with 13% of the area (worked by hand)', () => {
    // {t ≥ 0.2} is a triangle scaled by 0.4 (share 0.16); t_c ≤ 0.5 cuts a corner triangle of
    // scaled side 0.25 (share 0.0625 of it) at each corner: 0.16·(1 − 3·0.0625) = 0.13.
    const table = efficientTable(['max', 'max', 'max'], [[1, 0, 0], [0, 1, 0], [0, 0, 1]])
    const map = weightMap(table, { bounds: { lower: [0.2, 0.2, 0.2], upper: [0.5, 0.5, 0.5] } })
    expect(map.outline.vertices.length).toBe(6)
    expect(map.outline.areaShare).toBeCloseTo(0.13, 12)
    expect(map.regions.map(r => r.share).reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12)
    map.regions.forEach(r => expect(r.share).toBeCloseTo(1 / 3, 12))
  })

  it('SVG coordinates: corners, round trip, and placing a weighting', () => {
    expect(trianglePoint([1, 0, 0])).toEqual([0.5, 0])
    expect(trianglePoint([0, 1, 0])).toEqual([0, TRIANGLE_HEIGHT])
    expect(trianglePoint([0, 0, 1])).toEqual([1, TRIANGLE_HEIGHT])
    const t = [0.2, 0.3, 0.5]
    triangleWeights(trianglePoint(t)).forEach((x, c) => expect(x).toBeCloseTo(t[c]!, 14))
    const table = efficientTable(['max', 'max', 'max'], [[1, 0, 0], [0, 1, 0], [0, 0, 1]])
    const map = weightMap(table)
    const placed = placeOnMap(map, [2, 3, 5])!
    placed.t.forEach((x, c) => expect(x).toBeCloseTo(t[c]!, 14))
    // The polygon of a0 is drawn with the same mapping as its vertices.
    map.regions[0]!.points.forEach((pt, j) => expect(pt).toEqual(trianglePoint(map.regions[0]!.vertices[j]!)))
  })

  it.each<[string, () => unknown]>([
    ['two criteria', () => weightMap(efficientTable(['max', 'max'], [[1, 0], [0, 1]]))],
    ['four criteria and no corners chosen', () => weightMap(efficientTable(['max', 'max', 'max', 'max'], [[1, 0, 0, 0]]), { held: [1, 1, 1, 1] })],
    ['four criteria and no held weighting', () => weightMap(efficientTable(['max', 'max', 'max', 'max'], [[1, 0, 0, 0]]), { criteria: ['c0', 'c1', 'c2'] })],
    ['a held weighting that leaves the corners nothing', () => weightMap(efficientTable(['max', 'max', 'max', 'max'], [[1, 0, 0, 0]]), { criteria: ['c0', 'c1', 'c2'], held: [0, 0, 0, 1] })],
    ['an unknown corner criterion', () => weightMap(efficientTable(['max', 'max', 'max'], [[1, 0, 0]]), { criteria: ['c0', 'c1', 'cx'] })],
    ['a repeated corner criterion', () => weightMap(efficientTable(['max', 'max', 'max'], [[1, 0, 0]]), { criteria: ['c0', 'c1', 'c1'] })],
    ['reversed bounds', () => weightMap(efficientTable(['max', 'max', 'max'], [[1, 0, 0]]), { bounds: { lower: [0.5, 0, 0], upper: [0.4, 1, 1] } })],
    ['bounds that leave no weighting', () => weightMap(efficientTable(['max', 'max', 'max'], [[1, 0, 0]]), { bounds: { lower: [0.5, 0.5, 0.5], upper: [1, 1, 1] } })],
  ])('rejects %s with a RangeError', (_, call) => {
    expect(call).toThrow(RangeError)
  })
})

describe('weightLine', () => {
  it('intervals on the weight line (worked by hand)', () => {
    // Minimised; normalised a0 = (1, 0), a1 = (0, 1), a2 = (0.4, 0.4) (unsupported), a3 = a0.
    // S_a0 = t, S_a1 = 1 − t: a0 (and its twin a3) win for t ≥ ½, a1 for t ≤ ½, a2 never.
    const table = efficientTable(['min', 'min'], [[0, 10], [10, 0], [6, 6], [0, 10]])
    const line = weightLine(table)
    expect(line.criterionIds).toEqual(['c0', 'c1'])
    expect(line.segments.map(s => s.interval)).toEqual([[0.5, 1], [0, 0.5], null, [0.5, 1]])
    expect(line.segments.map(s => s.share)).toEqual([0.25, 0.5, 0, 0.25])
    expect(line.segments[0]!.sharedWith).toEqual(['a3'])
    expect(line.segments[1]!.centre).toBe(0.25)
  })

  it('holds the other criteria at a weighting; the favourite at each centre agrees', () => {
    const random = mulberry32(5)
    const rows = Array.from({ length: 12 }, () => [random(), random(), random()])
    const table = efficientTable(['max', 'min', 'max'], rows)
    const held = [0.2, 0.5, 0.3]
    const line = weightLine(table, { criteria: ['c2', 'c0'], held })
    expect(line.pairShare).toBeCloseTo(0.5, 12)
    expect(line.segments.reduce((s, x) => s + x.share, 0)).toBeCloseTo(1, 12)
    for (const segment of line.segments) {
      if (segment.lengthShare < 1e-9) continue
      const t = segment.centre!
      expect(weightedSumFavourite(table, [0.5 * (1 - t), 0.5, 0.5 * t]).winners).toContain(segment.alternativeId)
    }
    expect(() => weightLine(table)).toThrow(RangeError)
    expect(() => weightLine(table, { criteria: ['c0', 'c0'], held })).toThrow(RangeError)
  })
})
