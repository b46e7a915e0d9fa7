/**
 * The minutes of a room, assembled from the database into one typed value (shared/types/minutes.ts)
 * that the preview page shows and the PDF prints. Reads only; the anonymity rule is described there.
 */
import { and, asc, count, desc, eq, max, min } from 'drizzle-orm'
import { attachments, auditLog, ballots, ledgerVersions, resolutions, roomMembers, rooms, users, votes, weighings, type LedgerVersion, type Resolution } from '../database/schema'
import { ROOM_ROLES, ROOM_ROLE_LABELS } from '../../shared/roles'
import { STATUS_VOCABULARY, directionWords, joinWords, formatNumber, formatScore, statusSentence } from '../../shared/statusVocabulary'
import type { AlternativeStatus, Criterion } from '../../shared/types/decision'
import type { MinutesAlternative, MinutesAmendment, MinutesContent, MinutesCriterion, MinutesParticipant, MinutesResolution, MinutesRound, MinutesVote } from '../../shared/types/minutes'
import { pairFront } from '../../shared/utils/chartData'
import { GROUP_RULE_LABELS } from '../../shared/utils/narrowing'
import { largestRemainderPercentages } from '../../shared/utils/percentages'
import { tallyBallots } from '../../shared/utils/tally'
import { roundAcceptabilityDraws } from '../../shared/utils/weightSpace'
import type { Db, Tx } from './db'

export const MINUTES_CAUTION = 'Counterpoise supports the group’s deliberation; it does not decide. Responsibility for the decision stays with the people who took it and with the rules that govern them locally.'

const ANONYMITY_NOTE_NAMED = 'Every weighing showed names, so all participants are named.'
const ANONYMITY_NOTE_WITHHELD = 'At least one weighing was anonymous, so stakeholders are counted but not named here, and anonymous rounds number their weightings (Stakeholder 1, 2, …) in an order that does not follow who submitted first.'

const percentages = (weights: readonly number[]) => largestRemainderPercentages(weights)

/** Limits in words with units: "at least 10 £k, at most 40 £k", or "none". */
export function criterionLimitsText(criterion: Criterion): string {
  const parts: string[] = []
  if (criterion.lowest != null) parts.push(`at least ${formatScore(criterion.lowest, criterion)}`)
  if (criterion.highest != null) parts.push(`at most ${formatScore(criterion.highest, criterion)}`)
  return parts.length ? parts.join(', ') : 'none'
}

function statusLabel(status: string): string {
  return (STATUS_VOCABULARY as Record<string, { word: string } | undefined>)[status]?.word ?? status
}

/**
 * The plain statement the minutes make when the chosen alternative was not efficient, or null.
 * Dominated: names the dominating alternative and the criteria where the chosen one is worse.
 * Outside limits: names every broken limit with its value and unit.
 */
export function chosenStatusStatement(version: LedgerVersion, alternativeId: string, recordedStatus: string): string | null {
  if (recordedStatus === 'efficient') return null
  const analysis = analysisOf(version)
  const verdict = analysis.alternatives.find(v => v.id === alternativeId)
  const nameOf = (id: string) => version.alternatives.find(a => a.id === id)?.name ?? id
  const name = nameOf(alternativeId)
  if (!verdict) return `The chosen alternative (${alternativeId}) is not in ledger version ${version.number}.`
  const why = statusSentence(verdict, version.criteria, nameOf)
  if ((recordedStatus === 'dominated' || recordedStatus === 'weakly-efficient') && verdict.dominatedBy) {
    const better = verdict.worseOn.map(id => version.criteria.find(c => c.id === id)?.name ?? id)
    return `The room chose ${name} although the analysis of ledger version ${version.number} found it dominated: ${nameOf(verdict.dominatedBy)} is at least as good on every criterion${better.length ? ` and better on ${joinWords(better)}` : ''}.`
  }
  if (recordedStatus === 'infeasible') {
    return `The room chose ${name} although it is outside the limits set in ledger version ${version.number} (${why.replace(/^Outside limits: /, '')}).`
  }
  return `The room chose ${name}, whose status in ledger version ${version.number} was “${statusLabel(recordedStatus)}”.`
}

async function participantsOf(db: Db | Tx, roomId: string, withhold: boolean): Promise<MinutesParticipant[]> {
  const rows = await db.select({ name: users.displayName, role: roomMembers.role, joinedAt: roomMembers.joinedAt })
    .from(roomMembers).innerJoin(users, eq(users.id, roomMembers.userId))
    .where(eq(roomMembers.roomId, roomId)).orderBy(asc(roomMembers.joinedAt))
  const order = (role: string) => ROOM_ROLES.indexOf(role as typeof ROOM_ROLES[number])
  return rows
    .map(r => ({ name: withhold && r.role === 'stakeholder' ? null : r.name, role: r.role, roleLabel: ROOM_ROLE_LABELS[r.role] }))
    .sort((a, b) => order(a.role) - order(b.role) || (a.name ?? '').localeCompare(b.name ?? ''))
}

async function roundsOf(roomId: string, revealed: { id: string }[]): Promise<MinutesRound[]> {
  const rounds: MinutesRound[] = []
  for (const { id } of revealed) {
    const results = await weighingResults(roomId, id)
    const nameOf = (altId: string) => results.alternatives.find(a => a.id === altId)?.name ?? altId
    rounds.push({
      number: results.weighing.number,
      anonymous: !results.weighing.showNames,
      inputStyle: results.weighing.inputStyle,
      ledgerVersion: results.weighing.ledgerVersion,
      openedAt: results.weighing.openedAt,
      closedAt: results.weighing.closedAt,
      revealedAt: results.weighing.revealedAt,
      weightings: results.weightings.map(w => ({ label: w.label, weightsPercent: percentages(w.weights), favourites: w.favourites.map(nameOf) })),
      favouredBy: results.alternatives.map(a => ({ name: a.name, count: a.favouredBy })),
      group: results.group.map(g => ({
        rule: g.rule,
        ruleLabel: GROUP_RULE_LABELS[g.rule],
        weightsPercent: g.weights ? percentages(g.weights) : null,
        dispersionPercent: g.dispersion === null ? null : Math.round(g.dispersion * 1000) / 10,
        agreementPercent: g.agreement === null ? null : Math.round(g.agreement * 1000) / 10,
        favourites: g.favourites.map(nameOf),
        note: g.note,
      })),
      // The same draws the weight-space view makes for this weighing, so its figures can be drawn again.
      acceptability: roundAcceptabilityDraws(id),
    })
  }
  return rounds
}

async function latestClosedVote(db: Db | Tx, roomId: string): Promise<MinutesVote | null> {
  const [row] = await db.select({ vote: votes, version: ledgerVersions }).from(votes)
    .innerJoin(ledgerVersions, eq(ledgerVersions.id, votes.ledgerVersionId))
    .where(and(eq(votes.roomId, roomId), eq(votes.status, 'closed')))
    .orderBy(desc(votes.closedAt)).limit(1)
  if (!row) return null
  const cast = await db.select({ choices: ballots.choices }).from(ballots).where(eq(ballots.voteId, row.vote.id))
  const [eligible] = await db.select({ n: count() }).from(roomMembers).where(and(eq(roomMembers.roomId, roomId), eq(roomMembers.role, 'stakeholder')))
  const nameOf = (id: string) => row.version.alternatives.find(a => a.id === id)?.name ?? id
  return {
    ledgerVersion: row.version.number,
    openedAt: row.vote.openedAt.toISOString(),
    closedAt: row.vote.closedAt?.toISOString() ?? null,
    cast: cast.length,
    eligible: eligible?.n ?? 0,
    tally: tallyBallots(row.vote.shortlist, nameOf, cast).map(t => ({ name: t.name, counts: { approve: t.approve, object: t.object, abstain: t.abstain } })),
  }
}

async function resolutionView(db: Db | Tx, resolution: Resolution, version: LedgerVersion): Promise<MinutesResolution> {
  const [recorder] = resolution.recordedBy
    ? await db.select({ name: users.displayName }).from(users).where(eq(users.id, resolution.recordedBy))
    : []
  return {
    id: resolution.id,
    alternativeName: version.alternatives.find(a => a.id === resolution.alternativeId)?.name ?? resolution.alternativeId,
    engineStatus: resolution.engineStatus,
    engineStatusLabel: statusLabel(resolution.engineStatus),
    statusStatement: chosenStatusStatement(version, resolution.alternativeId, resolution.engineStatus),
    justification: resolution.justification,
    rationale: resolution.rationale,
    conditions: resolution.conditions,
    dissent: resolution.dissent,
    recordedBy: recorder?.name ?? '(former member)',
    recordedAt: resolution.recordedAt.toISOString(),
    frozenAt: resolution.frozenAt?.toISOString() ?? null,
  }
}

/** The room's newest resolution (corrections included), or undefined. */
export async function resolutionForMinutes(roomId: string, db: Db | Tx = useDb()): Promise<Resolution | undefined> {
  const [row] = await db.select().from(resolutions).where(eq(resolutions.roomId, roomId)).orderBy(desc(resolutions.recordedAt), desc(resolutions.id)).limit(1)
  return row
}

async function amendmentsOf(db: Db | Tx, roomId: string, resolution: Resolution): Promise<MinutesAmendment[]> {
  const all = await db.select({ r: resolutions, alternatives: ledgerVersions.alternatives }).from(resolutions)
    .innerJoin(ledgerVersions, eq(ledgerVersions.id, resolutions.ledgerVersionId))
    .where(eq(resolutions.roomId, roomId)).orderBy(asc(resolutions.recordedAt))
  const byId = new Map(all.map(row => [row.r.id, row]))
  const entry = (relation: MinutesAmendment['relation'], row: (typeof all)[number]): MinutesAmendment => ({
    relation,
    resolutionId: row.r.id,
    alternativeName: row.alternatives.find(a => a.id === row.r.alternativeId)?.name ?? row.r.alternativeId,
    recordedAt: row.r.recordedAt.toISOString(),
    frozenAt: row.r.frozenAt?.toISOString() ?? null,
  })
  const out: MinutesAmendment[] = []
  // The chain of earlier records this one corrects, nearest first (guarded against a loop).
  const seen = new Set([resolution.id])
  for (let id = resolution.amends; id && !seen.has(id); id = byId.get(id)?.r.amends ?? null) {
    seen.add(id)
    const row = byId.get(id)
    if (row) out.push(entry('amends', row))
  }
  for (const row of all) if (row.r.amends === resolution.id) out.push(entry('amended-by', row))
  return out
}

/**
 * Everything the minutes say for a room. The ledger version is the resolution's when one is
 * recorded (the newest, or `resolutionId`), else the current one; 409 when the room has no ledger yet.
 */
export async function minutesContent(roomId: string, options: { resolution?: Resolution, db?: Db | Tx, now?: Date } = {}): Promise<MinutesContent> {
  const db = options.db ?? useDb()
  const now = options.now ?? new Date()
  const [room] = await db.select().from(rooms).where(eq(rooms.id, roomId))
  if (!room) throw createError({ statusCode: 404, message: 'No such room.' })
  const resolution = options.resolution ?? await resolutionForMinutes(roomId, db)
  let version: LedgerVersion | undefined
  if (resolution) [version] = await db.select().from(ledgerVersions).where(eq(ledgerVersions.id, resolution.ledgerVersionId))
  else version = await currentLedgerVersion(roomId, db)
  if (!version || version.alternatives.length === 0) {
    throw createError({ statusCode: 409, message: 'The minutes need a ledger with alternatives: this room has none yet.' })
  }
  const analysis = analysisOf(version)
  const nameOf = (id: string) => version.alternatives.find(a => a.id === id)?.name ?? id
  const criterionName = (id: string) => version.criteria.find(c => c.id === id)?.name ?? id

  const revealed = await db.select({ id: weighings.id, showNames: weighings.showNames }).from(weighings)
    .where(and(eq(weighings.roomId, roomId), eq(weighings.status, 'revealed'))).orderBy(asc(weighings.number))
  const withhold = revealed.some(w => !w.showNames)

  const criteria: MinutesCriterion[] = version.criteria.map(c => ({
    id: c.id,
    name: c.name,
    unit: c.unit ?? '',
    direction: c.direction,
    directionLabel: directionWords(c.direction),
    lowest: c.lowest ?? null,
    highest: c.highest ?? null,
    limitsText: criterionLimitsText(c),
    precision: c.precision ?? null,
  }))
  const alternatives: MinutesAlternative[] = version.alternatives.map((a) => {
    const verdict = analysis.alternatives.find(v => v.id === a.id)!
    return {
      id: a.id,
      name: a.name,
      status: verdict.status,
      statusLabel: statusLabel(verdict.status),
      scoresText: version.criteria.map(c => formatScore(a.scores[c.id]!, c)),
      dominatedBy: verdict.dominatedBy ? { id: verdict.dominatedBy, name: nameOf(verdict.dominatedBy) } : null,
      worseOn: verdict.worseOn.map(criterionName),
      brokenLimits: verdict.brokenLimits.map((b) => {
        const c = version.criteria.find(x => x.id === b.criterionId)
        const fmt = (v: number) => (c ? formatScore(v, c) : formatNumber(v))
        return `${c?.name ?? b.criterionId} ${fmt(b.value)} is ${b.limit === 'highest' ? 'above the highest' : 'below the lowest'} acceptable ${fmt(b.limitValue)}`
      }),
      explanation: verdict.status === 'efficient' ? '' : statusSentence(verdict, version.criteria, nameOf),
    }
  })

  const [auditCounts, [auditSpan], [source]] = await Promise.all([
    db.select({ action: auditLog.action, count: count() }).from(auditLog).where(eq(auditLog.roomId, roomId)).groupBy(auditLog.action).orderBy(asc(auditLog.action)),
    db.select({ first: min(auditLog.at), last: max(auditLog.at) }).from(auditLog).where(eq(auditLog.roomId, roomId)),
    version.attachmentId
      ? db.select({ filename: attachments.filename, size: attachments.size, sha256: attachments.sha256 }).from(attachments).where(and(eq(attachments.id, version.attachmentId), eq(attachments.roomId, roomId)))
      : Promise.resolve([]),
  ])

  return {
    room: { id: room.id, title: room.title, question: room.question, status: room.status },
    date: (resolution?.recordedAt ?? now).toISOString(),
    preparedAt: now.toISOString(),
    participants: await participantsOf(db, roomId, withhold),
    stakeholderNamesWithheld: withhold,
    anonymityNote: withhold ? ANONYMITY_NOTE_WITHHELD : ANONYMITY_NOTE_NAMED,
    ledger: { version: version.number, hash: version.hash, createdAt: version.createdAt.toISOString(), note: version.note, source: source ?? null },
    criteria,
    alternatives,
    counts: analysis.counts as Record<AlternativeStatus, number>,
    front: version.criteria.length >= 2 ? pairFront(ledgerView(version), version.criteria[0]!.id, version.criteria[1]!.id) : null,
    rounds: await roundsOf(roomId, revealed),
    vote: await latestClosedVote(db, roomId),
    resolution: resolution ? await resolutionView(db, resolution, version) : null,
    amendments: resolution ? await amendmentsOf(db, roomId, resolution) : [],
    audit: {
      total: auditCounts.reduce((sum, r) => sum + r.count, 0),
      first: auditSpan?.first ? new Date(auditSpan.first).toISOString() : null,
      last: auditSpan?.last ? new Date(auditSpan.last).toISOString() : null,
      byAction: auditCounts.map(r => ({ action: r.action, count: r.count })),
    },
    caution: MINUTES_CAUTION,
  }
}
