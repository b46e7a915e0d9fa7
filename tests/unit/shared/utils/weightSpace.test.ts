import { describe, expect, it } from 'vitest'
import { defaultCorners, seedFromText } from '../../../../shared/utils/weightSpace'
import { placeOnMap, TRIANGLE_HEIGHT, type WeightMap } from '../../../../shared/utils/weightMap'
import { stabilitySentence } from '../../../../shared/utils/stabilityWords'
import { analyseLedger } from '../../../../shared/utils/ledger'
import { weightedSumFavourite } from '../../../../shared/utils/scalarise'

describe('seedFromText', () => {
  it('is FNV-1a (32-bit): the published test vectors', () => {
    // Test vectors of the FNV-1a 32-bit hash from its authors' reference page
    // (isthe.com/chongo/tech/comp/fnv, "FNV test vectors"), recalled from memory: "" and "a".
    expect(seedFromText('')).toBe(0x811C9DC5)
    expect(seedFromText('a')).toBe(0xE40C292C)
    expect(seedFromText('foobar')).toBe(0xBF9CF968)
  })
  it('is a whole 32-bit number, the same for the same text and different for another', () => {
    const a = seedFromText('weighing-1')
    expect(Number.isInteger(a) && a >= 0 && a < 2 ** 32).toBe(true)
    expect(seedFromText('weighing-1')).toBe(a)
    expect(seedFromText('weighing-2')).not.toBe(a)
  })
})

describe('defaultCorners', () => {
  it('takes every criterion when there are three, and none with fewer', () => {
    expect(defaultCorners(['a', 'b', 'c'], null)).toEqual(['a', 'b', 'c'])
    expect(defaultCorners(['a', 'b'], [0.5, 0.5])).toBeNull()
  })
  it('takes the three heaviest, in criterion order, ties by criterion order', () => {
    expect(defaultCorners(['a', 'b', 'c', 'd', 'e'], [0.1, 0.3, 0.1, 0.3, 0.2])).toEqual(['b', 'd', 'e'])
    expect(defaultCorners(['a', 'b', 'c', 'd'], [0.25, 0.25, 0.25, 0.25])).toEqual(['a', 'b', 'c'])
  })
})

// Only the corners and the number of criteria matter for where a weighting sits.
const mapOn = (criterionIndices: [number, number, number], p: number) => ({ criterionIndices, held: Array.from({ length: p }, () => 0) }) as unknown as WeightMap
const placeWeighting = (weights: number[], corners: [number, number, number]) => placeOnMap(mapOn(corners, weights.length), weights)?.point ?? null

describe('placeOnMap (where the weight space draws each weighting)', () => {
  it('puts all weight on a corner at that corner, and equal weights at the centre', () => {
    expect(placeWeighting([1, 0, 0], [0, 1, 2])).toEqual([0.5, 0])
    expect(placeWeighting([0, 1, 0], [0, 1, 2])).toEqual([0, TRIANGLE_HEIGHT])
    const [x, y] = placeWeighting([1, 1, 1], [0, 1, 2])!
    expect(x).toBeCloseTo(0.5, 12)
    expect(y).toBeCloseTo((2 / 3) * TRIANGLE_HEIGHT, 12)
  })
  it('projects a weighting of more criteria onto the three chosen, and refuses one with none on them', () => {
    expect(placeWeighting([0.2, 0.5, 0.1, 0.2], [1, 2, 3])).toEqual(placeWeighting([0.5, 0.1, 0.2], [0, 1, 2]))
    expect(placeWeighting([1, 0, 0, 0], [1, 2, 3])).toBeNull()
  })
})

describe('stabilitySentence', () => {
  const criteria = [
    { id: 'cost', name: 'Cost', unit: '£k', direction: 'min' as const },
    { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' as const },
  ]
  const alternatives = [
    { id: 'lean', name: 'Lean', scores: { cost: 0, reach: 0 } },
    { id: 'broad', name: 'Broad', scores: { cost: 10, reach: 10 } },
  ]
  const analysis = analyseLedger(criteria, alternatives, { support: false })
  const nameOf = (id: string) => alternatives.find(a => a.id === id)!.name
  it('gives the exact switching weight for two criteria, naming whose favourite it is', () => {
    // Normalised, Lean scores w_cost and Broad scores w_reach: they tie at 50%.
    const favourite = weightedSumFavourite(analysis, [0.7, 0.3])
    expect(favourite.winners).toEqual(['lean'])
    expect(stabilitySentence(analysis, favourite, 0, nameOf, 'The group\'s favourite'))
      .toMatch(/^The group's favourite stays the same while Cost is at least 5\d%; below that, Broad takes over\.$/)
    expect(stabilitySentence(analysis, favourite, 0, nameOf)).toMatch(/^Your favourite/)
  })
})
