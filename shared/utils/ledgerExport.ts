import type { LedgerView } from '../types/ledgerView'
import { csvCell } from './csvSafe'

const STATUS_WORDS = {
  'infeasible': 'outside limits',
  'dominated': 'dominated',
  'weakly-efficient': 'weakly efficient only',
  'efficient': 'efficient',
} as const

/**
 * The columns an export adds after the criteria: the engine's verdicts. An upload of an exported
 * file ignores them (server/utils/ledgerImport.ts), since they are worked out again on saving.
 */
export const EXPORT_VERDICT_HEADERS = ['Status', 'Reason', 'Weighted sum can favour it'] as const

/**
 * The ledger with the engine's verdicts as rows of cells (header first), every cell already made
 * safe for spreadsheets. One row per alternative in ledger order; criterion headers carry units.
 */
export function ledgerExportRows(view: LedgerView): string[][] {
  const names = new Map(view.alternatives.map(a => [a.id, a.name]))
  const criterionNames = new Map(view.criteria.map(c => [c.id, c.name]))
  const verdicts = new Map((view.analysis?.verdicts ?? []).map(v => [v.id, v]))
  const header = ['Alternative', ...view.criteria.map(c => (c.unit ? `${c.name} (${c.unit})` : c.name)), ...EXPORT_VERDICT_HEADERS]
  const rows = view.alternatives.map((a) => {
    const verdict = verdicts.get(a.id)
    let reason = ''
    if (verdict?.status === 'infeasible') {
      reason = verdict.brokenLimits.map(b => `${criterionNames.get(b.criterionId)} ${b.value} ${b.limit === 'lowest' ? '<' : '>'} ${b.limitValue}`).join('; ')
    }
    else if (verdict?.dominatedBy) {
      reason = `dominated by ${names.get(verdict.dominatedBy)}, worse on ${verdict.worseOn.map(id => criterionNames.get(id)).join(', ')}`
    }
    return [
      a.name,
      ...view.criteria.map(c => a.scores[c.id] ?? null),
      verdict ? STATUS_WORDS[verdict.status] : '',
      reason,
      verdict?.supported ?? null,
    ].map(csvCell)
  })
  return [header.map(csvCell), ...rows]
}
