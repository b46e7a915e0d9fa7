/**
 * Toasts: short messages about what just happened, shown by one host (`BaseToastHost` in app.vue).
 * `saved` toasts are read out politely and go away by themselves after a few seconds; `failed`
 * toasts are read out at once (role="alert") and stay until dismissed. State lives in `useState`,
 * so every component shares one list; toasts are only ever made in the browser.
 */
export type ToastKind = 'saved' | 'failed'
export interface Toast { id: number, kind: ToastKind, text: string }

/** How long a success toast stays (ms); paused while the pointer or focus is on the toasts. */
export const TOAST_SAVED_MS = 6000

let nextId = 1
const timers = new Map<number, ReturnType<typeof setTimeout>>()

/**
 * The server's own words from a failed `$fetch` (h3 errors carry `message` / `statusMessage`),
 * or `fallback` when there are none (no connection, not JSON).
 */
export function failureMessage(failure: unknown, fallback = 'That did not work. Check your connection and try again.') {
  const data = (failure as { data?: { message?: string, statusMessage?: string } } | null)?.data
  return data?.message || data?.statusMessage || fallback
}

export function useToasts() {
  const toasts = useState<Toast[]>('cp-toasts', () => [])

  function dismiss(id: number) {
    clearTimeout(timers.get(id))
    timers.delete(id)
    toasts.value = toasts.value.filter(t => t.id !== id)
  }
  function schedule(id: number) {
    clearTimeout(timers.get(id))
    timers.set(id, setTimeout(() => dismiss(id), TOAST_SAVED_MS))
  }
  function push(kind: ToastKind, text: string) {
    if (import.meta.server) return 0
    // The same message twice in a row is shown once (a double click, a retried action).
    const same = toasts.value.find(t => t.kind === kind && t.text === text)
    if (same) dismiss(same.id)
    const toast = { id: nextId++, kind, text }
    // At most five on screen: the oldest success goes first.
    const kept = toasts.value.length >= 5 ? toasts.value.filter((t, i) => !(t.kind === 'saved' && i === toasts.value.findIndex(x => x.kind === 'saved'))) : toasts.value
    toasts.value = [...kept, toast]
    if (kind === 'saved') schedule(toast.id)
    return toast.id
  }
  /** Stop (on hover or focus) and restart the success toasts' clocks. */
  function pause() {
    for (const [id, timer] of timers) {
      clearTimeout(timer)
      timers.delete(id)
    }
  }
  function resume() {
    for (const t of toasts.value) if (t.kind === 'saved') schedule(t.id)
  }

  return {
    toasts: readonly(toasts),
    saved: (text: string) => push('saved', text),
    failed: (text: string) => push('failed', text),
    /** A failure toast with the server's message for a failed `$fetch`. */
    failedWith: (failure: unknown, fallback?: string) => push('failed', failureMessage(failure, fallback)),
    dismiss,
    pause,
    resume,
  }
}
