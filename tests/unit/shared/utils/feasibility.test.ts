import { describe, expect, it } from 'vitest'
import type { Criterion } from '../../../../shared/types/decision'
import { brokenLimitsOf, feasibilityOf } from '../../../../shared/utils/feasibility'

const depth = (lowest: number | null | undefined, highest: number | null | undefined): Criterion =>
  ({ id: 'depth', name: 'Depth', unit: 'm', direction: 'max', lowest, highest })

describe('brokenLimitsOf', () => {
  it.each<[string, Criterion, number, string[]]>([
    ['inside both limits', depth(2, 5), 3, []],
    ['exactly at the lowest limit (inclusive)', depth(2, 5), 2, []],
    ['exactly at the highest limit (inclusive)', depth(2, 5), 5, []],
    ['below the lowest limit', depth(2, 5), 1.999, ['lowest']],
    ['above the highest limit', depth(2, 5), 5.001, ['highest']],
    ['no limits (null)', depth(null, null), -1e9, []],
    ['no limits (absent)', depth(undefined, undefined), 1e9, []],
    ['only a lowest limit', depth(0, null), -0.5, ['lowest']],
    ['a limit equal to both ends', depth(4, 4), 4, []],
  ])('%s', (_, criterion, value, kinds) => {
    const broken = brokenLimitsOf([criterion], { id: 'a', name: 'A', scores: { depth: value } })
    expect(broken.map(b => b.limit)).toEqual(kinds)
    for (const b of broken) {
      expect(b).toEqual({ criterionId: 'depth', limit: b.limit, limitValue: b.limit === 'lowest' ? criterion.lowest : criterion.highest, value })
    }
  })

  it('lists every broken limit in criterion order, whatever the direction', () => {
    const criteria: Criterion[] = [
      { id: 'cost', name: 'Cost', unit: '€', direction: 'min', highest: 10 },
      { id: 'safety', name: 'Safety', unit: 'score', direction: 'max', lowest: 3 },
    ]
    expect(brokenLimitsOf(criteria, { id: 'a', name: 'A', scores: { cost: 11, safety: 2 } })).toEqual([
      { criterionId: 'cost', limit: 'highest', limitValue: 10, value: 11 },
      { criterionId: 'safety', limit: 'lowest', limitValue: 3, value: 2 },
    ])
  })
})

describe('feasibilityOf', () => {
  it('flags each alternative and keeps the broken limits beside it', () => {
    const criteria = [depth(2, 5)]
    const result = feasibilityOf(criteria, [
      { id: 'a', name: 'A', scores: { depth: 3 } },
      { id: 'b', name: 'B', scores: { depth: 9 } },
    ])
    expect(Array.from(result.feasible)).toEqual([1, 0])
    expect(result.brokenLimits[0]).toEqual([])
    expect(result.brokenLimits[1]).toHaveLength(1)
  })

  it('empty input gives empty output', () => {
    const result = feasibilityOf([depth(1, 2)], [])
    expect(result.feasible).toHaveLength(0)
    expect(result.brokenLimits).toEqual([])
  })
})
