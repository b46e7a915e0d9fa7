import type { Alternative, Criterion } from '../types/decision'

/**
 * The ledger as canonical JSON: fixed key order, criteria in their order, each alternative's
 * scores in criterion order, absent optional fields as null. Two ledgers with the same content
 * give the same string, so its SHA-256 identifies a version (computed on the server).
 */
export function canonicalLedgerJson(criteria: readonly Criterion[], alternatives: readonly Alternative[]): string {
  return JSON.stringify({
    criteria: criteria.map(c => [c.id, c.name, c.unit, c.direction, c.lowest ?? null, c.highest ?? null, c.precision ?? null, c.description ?? null]),
    alternatives: alternatives.map(a => [a.id, a.name, criteria.map(c => a.scores[c.id] ?? null)]),
  })
}

/** The short form of a version hash shown on screen and in the minutes. */
export const shortHash = (hash: string) => hash.slice(0, 12)
