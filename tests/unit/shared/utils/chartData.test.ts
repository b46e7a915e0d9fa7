import { spawnSync } from 'node:child_process'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { Alternative, Criterion, Direction } from '../../../../shared/types/decision'
import type { LedgerView } from '../../../../shared/types/ledgerView'
import { escapeTooltipText, niceAxis, pairFront, thinPoints, valuePaths } from '../../../../shared/utils/chartData'
import { analyseLedger } from '../../../../shared/utils/ledger'

/** A ledger view as the route answers it, with the engine's real analysis. */
function viewOf(criteria: Criterion[], alternatives: Alternative[]): LedgerView {
  const analysis = analyseLedger(criteria, alternatives)
  return {
    version: null,
    criteria,
    alternatives,
    analysis: { verdicts: analysis.alternatives, counts: analysis.counts, efficientIds: analysis.efficientIds, ideal: analysis.ideal, nadir: analysis.nadir },
  }
}

const cost: Criterion = { id: 'cost', name: 'Capital cost', unit: '£m', direction: 'min', highest: 30, precision: 1 }
const homes: Criterion = { id: 'homes', name: 'Homes protected', unit: 'homes', direction: 'max' }
const alt = (id: string, scores: Record<string, number>): Alternative => ({ id, name: id.toUpperCase(), scores })

// Cost is minimised, homes maximised; "dunes" is efficient but sits in a dent of the front.
const coast = viewOf([cost, homes], [
  alt('wall', { cost: 10, homes: 100 }),
  alt('dunes', { cost: 20, homes: 150 }),
  alt('barrier', { cost: 30, homes: 300 }),
  alt('reef', { cost: 31.5, homes: 400 }),
  alt('groynes', { cost: 25, homes: 120 }),
  alt('retreat', { cost: 10, homes: 90 }),
])

describe('pairFront', () => {
  it('draws the front of a min/max pair as a staircase through the worse corners', () => {
    const pair = pairFront(coast, 'cost', 'homes')!
    expect(pair.front.map(s => s.ids)).toEqual([['wall'], ['dunes'], ['barrier']])
    // Moving right costs more and protects more: each corner keeps the higher cost and the fewer homes.
    expect(pair.staircase).toEqual([[10, 100], [20, 100], [20, 150], [30, 150], [30, 300]])
  })

  it('leaves alternatives outside limits off the front even when they would dominate it', () => {
    const pair = pairFront(coast, 'cost', 'homes')!
    const reef = pair.points.find(p => p.id === 'reef')!
    expect(reef).toMatchObject({ status: 'infeasible', onFront: false, x: 31.5, y: 400 })
    expect(pair.front.flatMap(s => s.ids)).not.toContain('reef')
    expect(pair.points).toHaveLength(6)
  })

  it('keeps the statuses over all criteria, unsupported included', () => {
    const byId = Object.fromEntries(pairFront(coast, 'cost', 'homes')!.points.map(p => [p.id, p.status]))
    expect(byId).toEqual({ wall: 'efficient', dunes: 'unsupported', barrier: 'efficient', reef: 'infeasible', groynes: 'dominated', retreat: 'weakly-efficient' })
  })

  // Two efficient points a (lower x) and b; the corner is the worse x and worse y of the two.
  it.each<[Direction, Direction, [number, number], [number, number], [number, number]]>([
    ['min', 'min', [1, 5], [3, 2], [3, 5]],
    ['max', 'max', [1, 5], [3, 2], [1, 2]],
    ['min', 'max', [1, 2], [3, 5], [3, 2]],
    ['max', 'min', [1, 2], [3, 5], [1, 5]],
  ])('x %s, y %s: the corner between %j and %j is %j', (dx, dy, a, b, corner) => {
    const view = viewOf(
      [{ id: 'x', name: 'X', unit: '', direction: dx }, { id: 'y', name: 'Y', unit: '', direction: dy }],
      [alt('b', { x: b[0], y: b[1] }), alt('a', { x: a[0], y: a[1] })],
    )
    const pair = pairFront(view, 'x', 'y')!
    expect(pair.front.map(s => s.ids[0])).toEqual(['a', 'b'])
    expect(pair.staircase).toEqual([a, corner, b])
  })

  it('gives exact ties one step carrying every name', () => {
    const view = viewOf([cost, homes], [
      alt('east', { cost: 12, homes: 200 }),
      alt('west', { cost: 12, homes: 200 }),
      alt('north', { cost: 8, homes: 150 }),
    ])
    const pair = pairFront(view, 'cost', 'homes')!
    expect(pair.front).toEqual([
      { x: 8, y: 150, ids: ['north'], names: ['NORTH'] },
      { x: 12, y: 200, ids: ['east', 'west'], names: ['EAST', 'WEST'] },
    ])
    expect(pair.points.filter(p => p.onFront).map(p => p.id)).toEqual(['east', 'west', 'north'])
  })

  it('keeps only the best x when the y criterion is constant', () => {
    const flat: Criterion = { id: 'flat', name: 'Flat', unit: '', direction: 'max' }
    const view = viewOf([cost, flat], [alt('a', { cost: 5, flat: 1 }), alt('b', { cost: 3, flat: 1 }), alt('c', { cost: 9, flat: 1 })])
    const pair = pairFront(view, 'cost', 'flat')!
    expect(pair.front.map(s => s.ids)).toEqual([['b']])
    expect(pair.staircase).toEqual([[3, 1]])
  })

  it('answers null for a criterion the ledger does not have', () => {
    expect(pairFront(coast, 'cost', 'nothing')).toBeNull()
  })

  it('no alternative within limits beats the staircase, and nothing within limits beats a step (any directions)', () => {
    const direction = fc.constantFrom<Direction>('min', 'max')
    const rows = fc.array(fc.tuple(fc.integer({ min: 0, max: 6 }), fc.integer({ min: 0, max: 6 }), fc.boolean()), { minLength: 1, maxLength: 25 })
    fc.assert(fc.property(direction, direction, rows, (dx, dy, data) => {
      const criteria: Criterion[] = [
        { id: 'x', name: 'X', unit: '', direction: dx },
        // Rows flagged true break this criterion's limit (their y is pushed above 100).
        { id: 'y', name: 'Y', unit: '', direction: dy, highest: 100 },
      ]
      const alternatives = data.map(([x, y, out], i) => alt(`a${i}`, { x, y: out ? 200 + y : y }))
      const pair = pairFront(viewOf(criteria, alternatives), 'x', 'y')!
      const better = (u: number, v: number, d: Direction) => (d === 'min' ? u < v : u > v)
      const noWorse = (u: number, v: number, d: Direction) => u === v || better(u, v, d)
      const feasible = pair.points.filter(p => p.status !== 'infeasible')
      for (const point of feasible) {
        // Some step is at least as good on both criteria.
        expect(pair.front.some(s => noWorse(s.x, point.x, dx) && noWorse(s.y, point.y, dy))).toBe(true)
      }
      for (const step of pair.front) {
        expect(feasible.some(p => noWorse(p.x, step.x, dx) && noWorse(p.y, step.y, dy) && (p.x !== step.x || p.y !== step.y))).toBe(false)
      }
      // The staircase alternates step, corner, step… and x never goes back.
      expect(pair.staircase).toHaveLength(Math.max(0, 2 * pair.front.length - 1))
      for (let k = 1; k < pair.staircase.length; k++) expect(pair.staircase[k]![0]).toBeGreaterThanOrEqual(pair.staircase[k - 1]![0])
    }))
  })
})

describe('thinPoints', () => {
  it('keeps the first point in each grid cell, in input order', () => {
    const points = [{ x: 0, y: 0, id: 'a' }, { x: 0.1, y: 0.1, id: 'b' }, { x: 10, y: 10, id: 'c' }, { x: 9.9, y: 0, id: 'd' }]
    expect(thinPoints(points, 2, 2).map(p => p.id)).toEqual(['a', 'c', 'd'])
  })

  it('never keeps more points than cells, and keeps everything when each point has its own cell', () => {
    const grid = Array.from({ length: 100 }, (_, i) => ({ x: i % 10, y: Math.floor(i / 10) }))
    expect(thinPoints(grid, 4, 3)).toHaveLength(12)
    expect(thinPoints(grid, 10, 10)).toHaveLength(100)
    expect(thinPoints([], 10, 10)).toEqual([])
    expect(thinPoints([{ x: 1, y: 1 }, { x: 1, y: 1 }], 10, 10)).toHaveLength(1)
  })
})

describe('valuePaths', () => {
  it('scales every efficient alternative 0–1 over the efficient set, 1 = best, whichever the direction', () => {
    const paths = valuePaths(coast)
    expect(paths.total).toBe(3)
    expect(paths.axes.map(a => [a.criterion.id, a.best, a.worst, a.constant])).toEqual([['cost', 10, 30, false], ['homes', 300, 100, false]])
    expect(paths.paths.map(p => [p.id, p.status, p.values])).toEqual([
      ['wall', 'efficient', [1, 0]],
      ['dunes', 'unsupported', [0.5, 0.25]],
      ['barrier', 'efficient', [0, 1]],
    ])
    expect(paths.paths[1]!.raw).toEqual([20, 150])
  })

  it('never draws an alternative outside limits or a dominated one', () => {
    const ids = valuePaths(coast).paths.map(p => p.id)
    expect(ids).not.toContain('reef')
    expect(ids).not.toContain('groynes')
    expect(ids).not.toContain('retreat')
  })

  it('puts a constant criterion at 1 for everyone and says it is constant', () => {
    const flat: Criterion = { id: 'flat', name: 'Flat', unit: 'km', direction: 'min' }
    const view = viewOf([cost, homes, flat], [alt('a', { cost: 5, homes: 10, flat: 2 }), alt('b', { cost: 7, homes: 20, flat: 2 })])
    const paths = valuePaths(view)
    expect(paths.axes[2]).toMatchObject({ best: 2, worst: 2, constant: true })
    expect(paths.paths.map(p => p.values[2])).toEqual([1, 1])
  })

  it('draws at most `limit` paths and still counts them all', () => {
    const paths = valuePaths(coast, 2)
    expect(paths.paths.map(p => p.id)).toEqual(['wall', 'dunes'])
    expect(paths.total).toBe(3)
  })

  it('works out ideal and nadir itself when the view lacks them', () => {
    const view: LedgerView = { ...coast, analysis: { ...coast.analysis!, ideal: null, nadir: null } }
    expect(valuePaths(view).paths.map(p => p.values)).toEqual(valuePaths(coast).paths.map(p => p.values))
  })

  it('gives nothing to draw without an analysis', () => {
    expect(valuePaths({ ...coast, analysis: null })).toEqual({ axes: [], paths: [], total: 0 })
  })
})

describe('escapeTooltipText', () => {
  it('makes an alternative name harmless inside a tooltip', () => {
    expect(escapeTooltipText('<img src=x onerror="alert(1)"> & \'Co\'')).toBe('&lt;img src=x onerror=&quot;alert(1)&quot;&gt; &amp; &#39;Co&#39;')
    expect(escapeTooltipText('North Wall')).toBe('North Wall')
  })

  // The legend and tooltip text ApexCharts writes with innerHTML: no markup survives, and an HTML
  // parser gives back exactly the name (outside check: Python's html.unescape, the standard library's
  // decoder of HTML character references).
  it('leaves no markup in hostile names, and decodes back to the name as typed', () => {
    const hostile = ['<script>window.__pwned=1</script>', '<img src=x onerror="window.__pwned=1">', '"><svg onload=alert(1)>', '{{ 7*7 }}', 'javascript:alert(1)', '=HYPERLINK("http://x")', 'Ash & Oak\'s &amp; "quotes"']
    const escaped = hostile.map(escapeTooltipText)
    for (const text of escaped) expect(text).not.toMatch(/[<>"']/)
    const decoded = spawnSync('python3', ['-c', 'import html, json, sys; print(json.dumps([html.unescape(s) for s in json.load(sys.stdin)]))'], { input: JSON.stringify(escaped), encoding: 'utf8' })
    expect(decoded.status, decoded.stderr).toBe(0)
    expect(JSON.parse(decoded.stdout)).toEqual(hostile)
  }, 20_000) // starting Python can take seconds on a busy machine
})

describe('niceAxis', () => {
  it.each([
    // lowest, highest → min, max, step, ticks, decimals
    [10, 31.5, 5, 35, 5, 6, 0],
    [90, 400, 0, 500, 100, 5, 0],
    [0.1, 0.7, 0, 0.8, 0.2, 4, 1],
    [0.12, 0.37, 0.1, 0.4, 0.1, 3, 1],
    [-3, 3, -4, 4, 2, 4, 0],
    // A step of 2.5 needs one decimal more than its power of ten.
    [0, 11, -2.5, 12.5, 2.5, 6, 1],
    // Binary noise gives a small but real span, without noise in the bounds.
    [0.3, 0.1 + 0.2, 0.26, 0.34, 0.02, 4, 2],
  ])('covers %s to %s with %s to %s in steps of %s', (lowest, highest, min, max, step, ticks, decimals) => {
    const axis = niceAxis(lowest, highest)
    expect(axis).toEqual({ min, max, step, ticks, decimals })
    expect(axis.min).toBeLessThan(Math.min(lowest, highest))
    expect(axis.max).toBeGreaterThan(Math.max(lowest, highest))
  })

  it('puts a single value in the middle of a range around it', () => {
    expect(niceAxis(1000, 1000)).toEqual({ min: 850, max: 1150, step: 50, ticks: 6, decimals: 0 })
    expect(niceAxis(0, 0)).toEqual({ min: -1.5, max: 1.5, step: 0.5, ticks: 6, decimals: 1 })
    expect(niceAxis(0, 5e-324)).toEqual(niceAxis(0, 0))
  })

  it('falls back to 0–1 for values it cannot place', () => {
    expect(niceAxis(Number.NaN, 3)).toEqual({ min: 0, max: 1, step: 0.2, ticks: 5, decimals: 1 })
    expect(niceAxis(-Number.MAX_VALUE, Number.MAX_VALUE)).toEqual({ min: 0, max: 1, step: 0.2, ticks: 5, decimals: 1 })
  })

  it('keeps whole steps, to double precision, for a narrow span far from zero (a case the property found)', () => {
    const low = -3.1901990353660817e-173
    const axis = niceAxis(low, low + 8.479615899124377e-183)
    // The span is under a billionth of the values, so it is drawn around one value.
    expect(axis).toEqual(niceAxis(low, low))
    expect(axis.min).toBeLessThanOrEqual(low)
    expect(axis.max).toBeGreaterThanOrEqual(low + 8.479615899124377e-183)
    expect(Math.abs((axis.max - axis.min) / axis.step - axis.ticks)).toBeLessThan(4 * Number.EPSILON * (Math.abs(axis.min) + Math.abs(axis.max)) / axis.step)
  })

  it('covers a span of a trillionth of its values (a case the property found)', () => {
    // fast-check seed 832817002: 12-digit snapping put the lower bound above the data.
    const low = 2.579904445364395e-150
    const high = low + 5.605465454786648e-162
    const axis = niceAxis(low, high)
    expect(axis.min).toBeLessThanOrEqual(low)
    expect(axis.max).toBeGreaterThanOrEqual(high)
    expect(axis.ticks).toBeGreaterThanOrEqual(2)
  })

  it('always covers the data, in whole steps, with a handful of ticks', () => {
    fc.assert(fc.property(fc.double({ min: -1e6, max: 1e6, noNaN: true }), fc.double({ min: 0, max: 1e6, noNaN: true }), (low, span) => {
      const axis = niceAxis(low, low + span)
      expect(axis.min).toBeLessThanOrEqual(low)
      expect(axis.max).toBeGreaterThanOrEqual(low + span)
      // Whole steps, up to the rounding of doubles: bounds n steps away from zero carry an error of
      // about n·2⁻⁵² steps (a narrow span far from zero, e.g. −3.19e-173 + 8.5e-183, is 1.6e10 steps out).
      const roundingInSteps = 4 * Number.EPSILON * (Math.abs(axis.min) + Math.abs(axis.max)) / axis.step
      expect(Math.abs((axis.max - axis.min) / axis.step - axis.ticks)).toBeLessThan(1e-6 + roundingInSteps)
      expect(axis.ticks).toBeGreaterThanOrEqual(2)
      expect(axis.ticks).toBeLessThanOrEqual(12)
    }))
  })
})
