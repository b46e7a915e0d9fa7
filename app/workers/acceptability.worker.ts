/**
 * SMAA-2 acceptability off the page's thread: the page posts the option table and the options,
 * the worker analyses the table, draws in chunks and posts progress between them, then the result.
 * A new request cancels the one under way (its later chunks are never drawn).
 */
import type { Alternative, Criterion } from '../../shared/types/decision'
import { startAcceptability, type AcceptabilityOptions, type AcceptabilityResult } from '../../shared/utils/acceptability'
import { analyseLedger } from '../../shared/utils/ledger'

export interface AcceptabilityRequest {
  id: number
  criteria: Criterion[]
  alternatives: Alternative[]
  options: Omit<AcceptabilityOptions, 'onProgress'>
}

export type AcceptabilityMessage
  = | { id: number, kind: 'progress', done: number, total: number }
    | { id: number, kind: 'result', result: AcceptabilityResult, elapsedMs: number }
    | { id: number, kind: 'error', message: string }

let current = 0

self.onmessage = (message: MessageEvent<AcceptabilityRequest>) => {
  const { id, criteria, alternatives, options } = message.data
  current = id
  const post = (answer: AcceptabilityMessage) => (self as unknown as Worker).postMessage(answer)
  const started = performance.now()
  try {
    const analysis = analyseLedger(criteria, alternatives, { support: false })
    const run = startAcceptability(analysis, options)
    const chunk = Math.max(500, Math.ceil(run.total / 40))
    const next = () => {
      if (current !== id) return
      try {
        run.step(chunk)
        if (run.done < run.total) {
          post({ id, kind: 'progress', done: run.done, total: run.total })
          setTimeout(next, 0) // let a newer request in between chunks
        }
        else {
          post({ id, kind: 'result', result: run.result(), elapsedMs: performance.now() - started })
        }
      }
      catch (error) {
        post({ id, kind: 'error', message: (error as Error).message })
      }
    }
    next()
  }
  catch (error) {
    post({ id, kind: 'error', message: (error as Error).message })
  }
}
