/** Field name → first message, from a list of schema issues (zod's `issues`). Pure, used on both sides. */
export function fieldErrorsOf(issues: ReadonlyArray<{ path: ReadonlyArray<PropertyKey>, message: string }>): Record<string, string> {
  const errors: Record<string, string> = {}
  for (const issue of issues) {
    const key = issue.path.map(String).join('.') || '_'
    errors[key] ??= issue.message
  }
  return errors
}
