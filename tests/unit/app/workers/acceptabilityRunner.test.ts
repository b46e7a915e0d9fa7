/**
 * The acceptability worker's messages, without a browser: acceptabilityRunner (what the worker does
 * with each request) driven with a hand-run queue in place of setTimeout, so the order of progress,
 * result and cancellation is exact; and the worker file itself, loaded with a stand-in `self`.
 */
import { afterEach, describe, expect, it, vi } from 'vitest'
import { acceptabilityRunner, MIN_CHUNK, type AcceptabilityMessage, type AcceptabilityRequest } from '../../../../app/workers/acceptabilityRunner'
import { acceptability } from '../../../../shared/utils/acceptability'
import { analyseLedger } from '../../../../shared/utils/ledger'
import type { Alternative, Criterion } from '../../../../shared/types/decision'

// Two efficient alternatives, each best on one criterion, and one dominated by both.
const criteria: Criterion[] = [
  { id: 'cost', name: 'Cost', unit: '£k', direction: 'min' },
  { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' },
]
const alternatives: Alternative[] = [
  { id: 'cheap', name: 'Cheap', scores: { cost: 10, reach: 100 } },
  { id: 'broad', name: 'Broad', scores: { cost: 20, reach: 200 } },
  { id: 'poor', name: 'Poor', scores: { cost: 30, reach: 50 } },
]
const request = (id: number, samples: number, seed = 42): AcceptabilityRequest => ({ id, criteria, alternatives, options: { samples, seed, region: 'simplex' } })

/** A runner whose "later" is a queue the test empties step by step. */
function manualRunner() {
  const messages: AcceptabilityMessage[] = []
  const queue: (() => void)[] = []
  let clock = 0
  const handle = acceptabilityRunner({ post: m => messages.push(m), schedule: next => queue.push(next), now: () => (clock += 5) })
  const step = () => queue.shift()?.()
  const drain = () => {
    while (queue.length) step()
  }
  return { handle, messages, queue, step, drain }
}

describe('acceptabilityRunner', () => {
  it('reports progress chunk by chunk, in order, then the result, and nothing after it', () => {
    const { handle, messages, drain } = manualRunner()
    handle(request(1, 10_000))
    drain()
    // 10,000 draws in chunks of MIN_CHUNK (500): progress after 19 chunks, the 20th ends with the result.
    const progress = messages.filter(m => m.kind === 'progress')
    expect(progress.map(m => m.done)).toEqual(Array.from({ length: 19 }, (_, k) => (k + 1) * MIN_CHUNK))
    expect(progress.every(m => m.total === 10_000 && m.id === 1)).toBe(true)
    expect(messages).toHaveLength(20)
    const last = messages.at(-1)!
    expect(last.kind).toBe('result')
    if (last.kind !== 'result') return
    expect(last.id).toBe(1)
    expect(last.elapsedMs).toBeGreaterThan(0)
    // Drawing in chunks gives exactly the figures of one uninterrupted run with the same seed.
    expect(last.result).toEqual(acceptability(analyseLedger(criteria, alternatives, { support: false }), { samples: 10_000, seed: 42, region: 'simplex' }))
    expect(last.result.samples).toBe(10_000)
    expect(last.result.seed).toBe(42)
  })

  it('gives the analytic shares: with weights uniform on the segment, each of two opposite alternatives is favoured half the time', () => {
    // Normalised, Cheap is (1, 0) and Broad (0, 1): Cheap wins exactly when the cost weight is above
    // 1/2, which has probability 1/2 under the uniform (Dirichlet(1, 1)) weight. Worked by hand.
    const { handle, messages, drain } = manualRunner()
    handle(request(1, 10_000, 7))
    drain()
    const last = messages.at(-1)!
    if (last.kind !== 'result') throw new Error(`expected a result, got ${last.kind}`)
    const { alternativeIds, firstRank, firstRankError, notEfficientIds } = last.result
    expect(notEfficientIds).toEqual(['poor'])
    for (const id of ['cheap', 'broad']) {
      const i = alternativeIds.indexOf(id)
      expect(Math.abs(firstRank[i]! - 0.5)).toBeLessThanOrEqual(4 * firstRankError[i]!)
    }
  })

  it('a newer request cancels the one under way: the old run posts nothing more and the new one finishes', () => {
    const { handle, messages, queue, step, drain } = manualRunner()
    handle(request(1, 10_000))
    step()
    expect(messages.map(m => [m.id, m.kind, m.kind === 'progress' ? m.done : null])).toEqual([[1, 'progress', 500], [1, 'progress', 1000]])
    expect(queue).toHaveLength(1) // run 1's third chunk waits
    handle(request(2, 2_000))
    drain()
    const fromFirst = messages.filter(m => m.id === 1)
    expect(fromFirst).toHaveLength(2)
    expect(fromFirst.some(m => m.kind === 'result')).toBe(false)
    const fromSecond = messages.filter(m => m.id === 2)
    expect(fromSecond.map(m => (m.kind === 'progress' ? m.done : m.kind))).toEqual([500, 1000, 1500, 'result'])
  })

  it('a chunk for larger runs is a fortieth of the draws, so progress still comes about 40 times', () => {
    const { handle, messages, drain } = manualRunner()
    handle(request(1, 40_000))
    drain()
    const progress = messages.filter(m => m.kind === 'progress')
    expect(progress.map(m => m.done)).toEqual(Array.from({ length: 39 }, (_, k) => (k + 1) * 1000))
    expect(messages.at(-1)!.kind).toBe('result')
  })

  it('answers a request it cannot run with an error message, and no progress', () => {
    const { handle, messages, queue } = manualRunner()
    handle(request(3, 0))
    expect(queue).toHaveLength(0)
    expect(messages).toHaveLength(1)
    expect(messages[0]).toMatchObject({ id: 3, kind: 'error' })
    expect(messages[0]!.kind === 'error' && messages[0]!.message).toMatch(/number of samples/i)
  })
})

describe('acceptability.worker.ts', () => {
  afterEach(() => {
    vi.unstubAllGlobals()
    vi.resetModules()
  })

  it('answers a posted request through the worker\'s own onmessage, progress first and the result last', async () => {
    const posted: AcceptabilityMessage[] = []
    let finished!: () => void
    const done = new Promise<void>((resolve) => {
      finished = resolve
    })
    const fakeSelf: { postMessage: (m: AcceptabilityMessage) => void, onmessage?: (event: { data: AcceptabilityRequest }) => void } = {
      postMessage: (m) => {
        posted.push(m)
        if (m.kind !== 'progress') finished()
      },
    }
    vi.stubGlobal('self', fakeSelf)
    await import('../../../../app/workers/acceptability.worker')
    expect(typeof fakeSelf.onmessage).toBe('function')
    fakeSelf.onmessage!({ data: request(9, 2_000) })
    await done
    expect(posted.map(m => [m.id, m.kind === 'progress' ? m.done : m.kind])).toEqual([[9, 500], [9, 1000], [9, 1500], [9, 'result']])
  })
})
