/**
 * A fresh id for a criterion (`c-…`) or an alternative (`a-…`). Ids only need to be unique within
 * one ledger, and the browser may not offer crypto.randomUUID outside secure contexts (a phone
 * on a meeting-room network over plain http), so this uses getRandomValues when present.
 */
export function newLedgerId(prefix: 'c' | 'a'): string {
  const bytes = new Uint8Array(8)
  if (globalThis.crypto?.getRandomValues) globalThis.crypto.getRandomValues(bytes)
  else for (let i = 0; i < bytes.length; i++) bytes[i] = Math.floor(Math.random() * 256)
  return `${prefix}-${Array.from(bytes, b => b.toString(36).padStart(2, '0')).join('').slice(0, 12)}`
}
