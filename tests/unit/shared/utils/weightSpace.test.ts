import { spawnSync } from 'node:child_process'
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { acceptabilityDrawsLine, defaultCorners, roundAcceptabilityDraws, seedFromText } from '../../../../shared/utils/weightSpace'
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

/** FNV-1a (32-bit) of a text's UTF-8 bytes, computed by python3 (not our code): the reference for the seed. */
function pythonFnv1a(text: string): number {
  const script = 'import sys\nh = 0x811C9DC5\nfor b in sys.argv[1].encode():\n    h = ((h ^ b) * 0x01000193) % 2**32\nprint(h)'
  const run = spawnSync('python3', ['-c', script, text], { encoding: 'utf8' })
  if (run.error) throw run.error
  return Number(run.stdout.trim())
}

describe('roundAcceptabilityDraws (the seed the weight-space view uses and the minutes record)', () => {
  const weighingId = '3f6c1d2e-8a4b-4c5d-9e0f-1a2b3c4d5e6f'

  it('draws 10,000 weightings with the FNV-1a hash of the weighing id as seed', () => {
    const draws = roundAcceptabilityDraws(weighingId)
    expect(draws).toEqual({ samples: 10_000, seed: pythonFnv1a(weighingId) })
    expect(roundAcceptabilityDraws('0e9b7a60-1c2d-4e3f-8a9b-0c1d2e3f4a5b').seed).not.toBe(draws.seed)
  })

  it('is the one function behind both the app\'s figures and the server\'s minutes', () => {
    // Both sides take samples and seed from roundAcceptabilityDraws, and neither derives a seed of its own.
    const app = readFileSync(new URL('../../../../app/components/spread/SpreadPanel.vue', import.meta.url), 'utf8')
    const server = readFileSync(new URL('../../../../server/utils/minutesContent.ts', import.meta.url), 'utf8')
    expect(app).toMatch(/roundAcceptabilityDraws\(props\.results\.weighing\.id\)/)
    expect(server).toMatch(/acceptability: roundAcceptabilityDraws\(id\)/)
    for (const source of [app, server]) {
      expect(source).not.toMatch(/seedFromText|samples: \d/)
    }
  })

  it('reads as one line of the minutes', () => {
    expect(acceptabilityDrawsLine({ samples: 10_000, seed: 1_234_567_890 })).toBe('Acceptability figures: 10,000 random weightings, seed 1234567890')
    expect(acceptabilityDrawsLine({ samples: 1, seed: 0 })).toBe('Acceptability figures: 1 random weighting, seed 0')
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
