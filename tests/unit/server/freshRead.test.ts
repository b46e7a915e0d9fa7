/**
 * freshRead (server/utils/freshRead.ts): callers share a read only when it started after they
 * asked. Reads here are promises the test settles by hand, so the order of events is exact.
 */
import { describe, expect, it } from 'vitest'
import { freshRead } from '../../../server/utils/freshRead'

/** A read the test resolves or rejects when it chooses; `started` counts calls. */
function controlledReads() {
  const pending: { resolve: (v: number) => void, reject: (e: Error) => void }[] = []
  let started = 0
  const read = () => new Promise<number>((resolve, reject) => {
    started++
    pending.push({ resolve, reject })
  })
  return { read, pending, started: () => started }
}
const tick = () => new Promise(resolve => setTimeout(resolve, 0))

describe('freshRead', () => {
  it('starts a read at once when none is running', async () => {
    const reads = controlledReads()
    const first = freshRead('a', reads.read)
    expect(reads.started()).toBe(1)
    reads.pending[0]!.resolve(1)
    expect(await first).toBe(1)
  })

  it('never hands a running read to a later caller: those share the next one, started after it ends', async () => {
    const reads = controlledReads()
    const early = freshRead('room', reads.read)
    const late = Array.from({ length: 50 }, () => freshRead('room', reads.read))
    expect(reads.started()).toBe(1) // the 50 wait; they do not start reads of their own
    reads.pending[0]!.resolve(1)
    expect(await early).toBe(1)
    await tick()
    expect(reads.started()).toBe(2) // one read for all 50, begun after the first ended
    reads.pending[1]!.resolve(2)
    expect(await Promise.all(late)).toEqual(Array.from({ length: 50 }, () => 2))
  })

  it('a caller that arrives while the shared next read runs waits for the one after', async () => {
    const reads = controlledReads()
    const a = freshRead('r', reads.read)
    const b = freshRead('r', reads.read)
    reads.pending[0]!.resolve(1)
    await a
    await tick()
    const c = freshRead('r', reads.read) // b's read is running now: c may not have it
    reads.pending[1]!.resolve(2)
    expect(await b).toBe(2)
    await tick()
    expect(reads.started()).toBe(3)
    reads.pending[2]!.resolve(3)
    expect(await c).toBe(3)
  })

  it('keeps keys apart', async () => {
    const reads = controlledReads()
    const x = freshRead('x', reads.read)
    const y = freshRead('y', reads.read)
    expect(reads.started()).toBe(2)
    reads.pending[1]!.resolve(20)
    reads.pending[0]!.resolve(10)
    expect([await x, await y]).toEqual([10, 20])
  })

  it('a failed read fails only those who shared it; the next callers read afresh', async () => {
    const reads = controlledReads()
    const failing = freshRead('f', reads.read)
    const queued = freshRead('f', reads.read)
    reads.pending[0]!.reject(new Error('database restarting'))
    await expect(failing).rejects.toThrow('database restarting')
    await tick()
    reads.pending[1]!.resolve(7)
    expect(await queued).toBe(7)
    const later = freshRead('f', reads.read)
    expect(reads.started()).toBe(3)
    reads.pending[2]!.resolve(8)
    expect(await later).toBe(8)
  })
})
