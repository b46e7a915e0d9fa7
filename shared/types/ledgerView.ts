/**
 * What `GET /api/rooms/[id]/ledger` answers, as the browser receives it (after JSON: dates are
 * strings). Mirrors `ledgerView` in server/utils/ledgerStore.ts, which cannot be imported into
 * app code; the room page passes the fetched value to components typed with this, so a drift
 * between the two shows up in `nuxt typecheck`.
 */
import type { Alternative, AlternativeStatus, Criterion } from './decision'
import type { AlternativeVerdict } from './engine'

export interface LedgerViewVersion {
  number: number
  /** SHA-256 (hex) of the canonical JSON of criteria and alternatives. */
  hash: string
  shortHash: string
  note: string
  createdAt: string | Date
  attachmentId: string | null
}

export interface LedgerViewAnalysis {
  /** One verdict per alternative, in ledger order. */
  verdicts: AlternativeVerdict[]
  counts: Record<AlternativeStatus, number>
  efficientIds: string[]
  /** Best value per criterion id over the efficient set; null when nothing is efficient. */
  ideal: Record<string, number> | null
  /** Worst value per criterion id over the efficient set; null when nothing is efficient. */
  nadir: Record<string, number> | null
}

export interface LedgerView {
  version: LedgerViewVersion | null
  criteria: Criterion[]
  alternatives: Alternative[]
  /** Null before the first save and while the ledger has no alternatives. */
  analysis: LedgerViewAnalysis | null
}
