import type { Alternative, Criterion } from '~~/shared/types/decision'
import type { AcceptabilityOptions, AcceptabilityResult } from '~~/shared/utils/acceptability'
import type { AcceptabilityMessage, AcceptabilityRequest } from '~/workers/acceptability.worker'

/**
 * Acceptability analysis in a web worker, with progress. `run` starts a computation (cancelling
 * one under way); `progress` goes from 0 to 1; `result` holds the latest finished one. Client
 * only: the worker is made on first use and ended with the component.
 */
export function useAcceptability() {
  const result = shallowRef<AcceptabilityResult | null>(null)
  const progress = ref(0)
  const running = ref(false)
  const error = ref<string | null>(null)
  const elapsedMs = ref<number | null>(null)
  let worker: Worker | undefined
  let last = 0

  function ensureWorker() {
    if (worker) return worker
    worker = new Worker(new URL('../workers/acceptability.worker.ts', import.meta.url), { type: 'module' })
    worker.onmessage = (message: MessageEvent<AcceptabilityMessage>) => {
      const answer = message.data
      if (answer.id !== last) return
      if (answer.kind === 'progress') {
        progress.value = answer.done / answer.total
        return
      }
      running.value = false
      if (answer.kind === 'error') {
        error.value = answer.message
        return
      }
      progress.value = 1
      result.value = answer.result
      elapsedMs.value = answer.elapsedMs
    }
    worker.onerror = (event) => {
      running.value = false
      error.value = `The analysis stopped: ${event.message || 'the worker failed'}.`
    }
    return worker
  }

  function run(criteria: readonly Criterion[], alternatives: readonly Alternative[], options: Omit<AcceptabilityOptions, 'onProgress'>) {
    last += 1
    running.value = true
    progress.value = 0
    error.value = null
    const request: AcceptabilityRequest = {
      id: last,
      // Plain copies: reactive proxies cannot be posted.
      criteria: JSON.parse(JSON.stringify(criteria)),
      alternatives: JSON.parse(JSON.stringify(alternatives)),
      options: JSON.parse(JSON.stringify(options)),
    }
    ensureWorker().postMessage(request)
  }

  tryOnScopeDispose(() => worker?.terminate())

  return { result, progress, running, error, elapsedMs, run }
}
