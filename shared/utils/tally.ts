/**
 * The count of a final vote: for each alternative on the ballot, how many approve, object and
 * abstain. Plain data in, plain data out (no framework), shared by the server, the pages and the
 * minutes.
 */
import type { BallotChoice, TallyRow } from '../types/resolution'

/**
 * One row per alternative of `shortlist`, in ballot order. A ballot that names no choice for an
 * alternative (it cannot happen for ballots the server stored, which are complete) counts for
 * nothing there; choices for alternatives not on the shortlist are ignored.
 */
export function tallyBallots(
  shortlist: readonly string[],
  nameOf: (alternativeId: string) => string,
  ballots: readonly { choices: Readonly<Record<string, BallotChoice>> }[],
): TallyRow[] {
  const rows = shortlist.map(id => ({ alternativeId: id, name: nameOf(id), approve: 0, object: 0, abstain: 0 }))
  const index = new Map(shortlist.map((id, i) => [id, i]))
  for (const ballot of ballots) {
    for (const [id, choice] of Object.entries(ballot.choices)) {
      const i = index.get(id)
      if (i === undefined || (choice !== 'approve' && choice !== 'object' && choice !== 'abstain')) continue
      rows[i]![choice] += 1
    }
  }
  return rows
}

/**
 * The alternatives with the most approvals (ties all listed, ballot order), or none when nobody
 * approved anything. Approval counting: a plain count of approvals per alternative.
 */
export function mostApproved(tally: readonly TallyRow[]): string[] {
  const top = Math.max(0, ...tally.map(r => r.approve))
  return top === 0 ? [] : tally.filter(r => r.approve === top).map(r => r.alternativeId)
}

/** "3 approve · 1 object · 0 abstain". */
export function tallyLine(row: Pick<TallyRow, 'approve' | 'object' | 'abstain'>): string {
  return `${row.approve} approve · ${row.object} object · ${row.abstain} abstain`
}
