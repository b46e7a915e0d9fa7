/**
 * Asking before a destructive or final action: `const confirm = useConfirm()`, then
 * `if (!await confirm({ title, body, confirmLabel, danger: true })) return`. One dialog
 * (`BaseConfirmHost` in app.vue) shows the question; Cancel, Escape or a click beside the dialog
 * answers false. A second question while one is open answers the first with false.
 */
export interface ConfirmRequest {
  title: string
  body: string
  confirmLabel: string
  /** The safe choice's words (default "Cancel"). */
  cancelLabel?: string
  /** A destructive action: the confirm button is rust. */
  danger?: boolean
  /** data-testid of the dialog (default "confirm-dialog"). */
  testId?: string
}

// The answer's resolver is a function, which useState cannot hold; questions are only asked in the browser.
let answer: ((ok: boolean) => void) | null = null

/** The host's side: the question now showing, and how to answer it. */
export function useConfirmRequest() {
  const request = useState<ConfirmRequest | null>('cp-confirm', () => null)
  function settle(ok: boolean) {
    const resolve = answer
    answer = null
    request.value = null
    resolve?.(ok)
  }
  return { request: readonly(request), settle }
}

export function useConfirm() {
  const request = useState<ConfirmRequest | null>('cp-confirm', () => null)
  return function confirm(question: ConfirmRequest): Promise<boolean> {
    if (import.meta.server) return Promise.resolve(false)
    answer?.(false)
    request.value = { ...question }
    return new Promise<boolean>((resolve) => {
      answer = resolve
    })
  }
}
