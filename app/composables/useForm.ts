import type { z } from 'zod'
import { fieldErrorsOf } from '~~/shared/utils/fieldErrors'

interface FetchErrorLike { data?: { message?: string, data?: { fieldErrors?: Record<string, string> } }, statusCode?: number }

/**
 * A form checked by the same zod schema as its route: field errors appear before sending,
 * and the server's per-field answers land in the same place.
 */
export function useForm<S extends z.ZodObject>(schema: S, initial: z.input<S>) {
  const values = reactive({ ...initial }) as z.input<S>
  const fieldErrors = ref<Record<string, string>>({})
  const formError = ref('')
  const pending = ref(false)

  async function submit<T>(send: (body: z.output<S>) => Promise<T>): Promise<T | undefined> {
    formError.value = ''
    const parsed = schema.safeParse(values)
    if (!parsed.success) {
      fieldErrors.value = fieldErrorsOf(parsed.error.issues)
      return undefined
    }
    fieldErrors.value = {}
    pending.value = true
    try {
      return await send(parsed.data)
    }
    catch (error) {
      const answer = error as FetchErrorLike
      fieldErrors.value = answer.data?.data?.fieldErrors ?? {}
      formError.value = answer.data?.message ?? 'Something went wrong. Check your connection and try again.'
      return undefined
    }
    finally {
      pending.value = false
    }
  }

  return { values, fieldErrors, formError, pending, submit }
}
