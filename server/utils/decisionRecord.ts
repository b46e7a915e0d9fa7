/**
 * The full decision record of a room for the archive (shared/types/decisionRecord.ts).
 * Reads only. Who chose what in a vote is left out: the record carries each vote's tally, as the
 * minutes do, since secretaries may export it and never see ballots. When the minutes withhold
 * stakeholders' names (an anonymous weighing), so does the record: the audit entries of weights
 * and ballots lose their actor and the input style, which could single out the one who ranked.
 */
import { asc, eq } from 'drizzle-orm'
import { auditLog, users } from '../database/schema'
import type { DecisionRecordExport, DecisionRecordResolution } from '../../shared/types/decisionRecord'
import type { ResolutionView } from '../../shared/types/resolution'
import { listMinutesRecords } from './minutesRecords'
import { minutesContent } from './minutesContent'
import { listResolutions } from './resolutions'
import { listVotes, withoutBallots } from './votes'

/** Each resolution with the chain of earlier ones it corrects (nearest first, guarded against a loop) and its direct corrections. */
export function withAmendmentChains(resolutions: readonly ResolutionView[]): DecisionRecordResolution[] {
  const byId = new Map(resolutions.map(r => [r.id, r]))
  return resolutions.map((resolution) => {
    const amendsChain: string[] = []
    const seen = new Set([resolution.id])
    for (let id = resolution.amends; id && !seen.has(id); id = byId.get(id)?.amends ?? null) {
      seen.add(id)
      amendsChain.push(id)
    }
    const amendedBy = resolutions.filter(r => r.amends === resolution.id).map(r => r.id)
    return { ...resolution, amendsChain, amendedBy }
  })
}

/** Audit entries that would tie a stakeholder to a weighting or a ballot. */
const STAKEHOLDER_ACTIONS = new Set(['weights.submitted', 'ballot.cast'])

function withheld(details: Record<string, unknown>): Record<string, unknown> {
  const { style: _style, ...rest } = details
  return rest
}

export async function decisionRecord(roomId: string): Promise<DecisionRecordExport> {
  const minutes = await minutesContent(roomId)
  const [resolutions, votes, audit, signed] = await Promise.all([
    listResolutions(roomId),
    listVotes(roomId),
    useDb().select({ id: auditLog.id, at: auditLog.at, action: auditLog.action, actor: users.displayName, details: auditLog.details })
      .from(auditLog).leftJoin(users, eq(users.id, auditLog.actorId))
      .where(eq(auditLog.roomId, roomId)).orderBy(asc(auditLog.id)),
    listMinutesRecords(roomId),
  ])
  // The lists come newest first; the record reads from the beginning.
  return {
    format: 'counterpoise-decision-record',
    formatVersion: 2,
    exportedAt: new Date().toISOString(),
    minutes,
    resolutions: withAmendmentChains(resolutions).reverse(),
    votes: votes.map(withoutBallots).reverse(),
    audit: audit.map(a => minutes.stakeholderNamesWithheld && STAKEHOLDER_ACTIONS.has(a.action)
      ? { id: a.id, at: a.at.toISOString(), action: a.action, actor: null, details: withheld(a.details) }
      : { id: a.id, at: a.at.toISOString(), action: a.action, actor: a.actor, details: a.details }),
    signedMinutes: signed.reverse(),
  }
}
