import { createHash } from 'node:crypto'
import type { Alternative, Criterion } from '../../shared/types/decision'
import { canonicalLedgerJson } from '../../shared/utils/ledgerHash'

/** SHA-256 (hex) of a ledger's canonical JSON: the identity of a ledger version. */
export function ledgerHash(criteria: readonly Criterion[], alternatives: readonly Alternative[]) {
  return createHash('sha256').update(canonicalLedgerJson(criteria, alternatives)).digest('hex')
}
