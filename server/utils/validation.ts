import type { H3Event } from 'h3'
import type { z } from 'zod'
import { fieldErrorsOf } from '../../shared/utils/fieldErrors'

function invalid(issues: z.core.$ZodIssue[], statusCode = 400) {
  const fieldErrors = fieldErrorsOf(issues)
  return createError({
    statusCode,
    message: Object.values(fieldErrors)[0] ?? 'The request is not valid.',
    data: { fieldErrors },
  })
}

/** Parse the JSON body with a schema from shared/schemas; 400 with per-field messages when it does not fit. */
export async function validBody<S extends z.ZodType>(event: H3Event, schema: S): Promise<z.infer<S>> {
  let raw: unknown
  try {
    raw = await readBody(event)
  }
  catch {
    throw createError({ statusCode: 400, message: 'The request body is not valid JSON.' })
  }
  const result = schema.safeParse(raw ?? {})
  if (!result.success) throw invalid(result.error.issues)
  return result.data
}

/** Route parameters; a malformed id answers 404, as a missing room would. */
export function validParams<S extends z.ZodType>(event: H3Event, schema: S): z.infer<S> {
  const result = schema.safeParse(getRouterParams(event))
  if (!result.success) throw createError({ statusCode: 404, message: 'Not found.' })
  return result.data
}
