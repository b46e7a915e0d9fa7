/**
 * A safe place to return to after sign-in: only a path on this site. Anything else — an absolute
 * URL, a protocol-relative `//host`, a backslash trick, a non-string — falls back to `fallback`.
 */
export function safeRedirect(target: unknown, fallback = '/rooms'): string {
  if (typeof target !== 'string' || target.length === 0 || target.length > 2000) return fallback
  if (!target.startsWith('/') || target.startsWith('//') || target.startsWith('/\\')) return fallback
  // Control characters and backslashes can turn a path into a host in some browsers.
  // eslint-disable-next-line no-control-regex -- refusing control characters is the point
  if (/[\u0000-\u001F\\]/.test(target)) return fallback
  return target
}
