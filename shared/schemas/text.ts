import type { z } from 'zod'

/**
 * Control characters in names and texts. PostgreSQL refuses U+0000 in text outright, and the other
 * control characters (and the Unicode line and paragraph separators) turn a one-line name into
 * several lines in e-mail headers, CSV cells and the minutes. The same rules serve the forms, the
 * routes and the spreadsheet upload (server/utils/ledgerImport.ts), so a clean preview never fails
 * on save. The bidirectional embedding, override and isolate controls (U+202A–U+202E,
 * U+2066–U+2069) are refused too: they can make a name read differently from what it is.
 */
export const SINGLE_LINE_FORBIDDEN = /[\p{Cc}\u2028\u2029\u202A-\u202E\u2066-\u2069]/u
/** In longer texts line breaks and tabs are fine; other control characters are not. */
// eslint-disable-next-line no-control-regex -- finding control characters is the point
export const MULTI_LINE_FORBIDDEN = /[\0-\x08\x0B\x0C\x0E-\x1F\x7F-\x9F\u202A-\u202E\u2066-\u2069]/

/** Where the first forbidden character sits, for a message that says what and where (1-based). */
export function forbiddenAt(text: string, pattern: RegExp): { position: number, code: string } | null {
  const match = pattern.exec(text)
  if (!match) return null
  return { position: match.index + 1, code: `U+${match[0].codePointAt(0)!.toString(16).toUpperCase().padStart(4, '0')}` }
}

/** A name kept on one line: no line breaks, tabs or other control characters. */
export function singleLine<S extends z.ZodString>(schema: S, what: string): S {
  return schema.refine(text => !SINGLE_LINE_FORBIDDEN.test(text), {
    error: issue => describe(issue.input as string, SINGLE_LINE_FORBIDDEN, `${what} must stay on one line, without tabs or control characters`),
  }) as S
}

/** A longer text: line breaks and tabs allowed, other control characters not. */
export function multiLine<S extends z.ZodString>(schema: S, what: string): S {
  return schema.refine(text => !MULTI_LINE_FORBIDDEN.test(text), {
    error: issue => describe(issue.input as string, MULTI_LINE_FORBIDDEN, `${what} cannot contain control characters`),
  }) as S
}

function describe(text: string, pattern: RegExp, rule: string): string {
  const at = typeof text === 'string' ? forbiddenAt(text, pattern) : null
  return at ? `${rule} (character ${at.position} is ${at.code}).` : `${rule}.`
}
