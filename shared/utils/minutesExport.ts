/**
 * The archive exports of a room's decision record: its tables as CSV rows (formula-safe cells,
 * see csvSafe.ts) from the same MinutesContent the minutes are printed from, so an export and the
 * signed PDF never disagree.
 */
import type { MinutesContent } from '../types/minutes'
import { csvCell } from './csvSafe'

export const MINUTES_TABLES = ['alternatives', 'weightings', 'vote'] as const
export type MinutesTable = (typeof MINUTES_TABLES)[number]

const withUnit = (name: string, unit: string) => (unit ? `${name} (${unit})` : name)

/** Rows (header first) of one table of the record, every cell passed through `csvCell`. */
export function minutesTableRows(content: MinutesContent, table: MinutesTable): string[][] {
  const rows: (string | number | null)[][] = []
  if (table === 'alternatives') {
    rows.push(['Alternative', 'Status', ...content.criteria.map(c => withUnit(c.name, c.unit)), 'Dominated by', 'Worse on', 'Limits broken', 'Why set aside'])
    for (const a of content.alternatives) {
      rows.push([a.name, a.statusLabel, ...a.scoresText, a.dominatedBy?.name ?? '', a.worseOn.join('; '), a.brokenLimits.join('; '), a.explanation])
    }
  }
  else if (table === 'weightings') {
    rows.push(['Weighing', 'Anonymous', 'Stakeholder', ...content.criteria.map(c => `${c.name} weight (%)`), 'Favourite'])
    for (const round of content.rounds) {
      for (const w of round.weightings) rows.push([round.number, round.anonymous ? 'yes' : 'no', w.label, ...w.weightsPercent, w.favourites.join('; ')])
      for (const g of round.group) {
        if (g.weightsPercent) rows.push([round.number, round.anonymous ? 'yes' : 'no', `Group (${g.ruleLabel.toLowerCase()})`, ...g.weightsPercent, g.favourites.join('; ')])
      }
    }
  }
  else {
    rows.push(['Alternative', 'Approve', 'Object', 'Abstain'])
    for (const t of content.vote?.tally ?? []) rows.push([t.name, t.counts.approve, t.counts.object, t.counts.abstain])
  }
  return rows.map(row => row.map(cell => csvCell(cell)))
}
