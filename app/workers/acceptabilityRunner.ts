/**
 * What the acceptability worker does with each request, apart from the worker itself, so it can be
 * run and tested anywhere: analyse the table, draw in chunks, report progress between chunks, then
 * the result (or an error). A newer request cancels the one under way: its later chunks are never
 * drawn and it posts nothing more.
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

/** The smallest chunk drawn between two progress messages; larger runs take about 40 chunks. */
export const MIN_CHUNK = 500

export interface AcceptabilityRunnerHooks {
  /** Sends a message to the page. */
  post: (message: AcceptabilityMessage) => void
  /** Runs `next` later, letting a newer request in first (the worker uses setTimeout(next, 0)). */
  schedule?: (next: () => void) => void
  /** Milliseconds, for the elapsed time reported with the result. */
  now?: () => number
}

/** A handler for requests, as the worker's onmessage calls it. */
export function acceptabilityRunner({ post, schedule = next => setTimeout(next, 0), now = () => performance.now() }: AcceptabilityRunnerHooks) {
  let current = 0
  return (request: AcceptabilityRequest) => {
    const { id, criteria, alternatives, options } = request
    current = id
    const started = now()
    try {
      const analysis = analyseLedger(criteria, alternatives, { support: false })
      const run = startAcceptability(analysis, options)
      const chunk = Math.max(MIN_CHUNK, Math.ceil(run.total / 40))
      const next = () => {
        if (current !== id) return
        try {
          run.step(chunk)
          if (run.done < run.total) {
            post({ id, kind: 'progress', done: run.done, total: run.total })
            schedule(next)
          }
          else {
            post({ id, kind: 'result', result: run.result(), elapsedMs: now() - started })
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
}
