import { createHash } from 'node:crypto'
import { and, asc, count, desc, eq, sql } from 'drizzle-orm'
import { ledgerVersions, roomMembers, rooms, submissions, users, weighings, type LedgerVersion, type Submission, type Weighing } from '../database/schema'
import type { OpenWeighingBody, SubmitWeightsBody } from '../../shared/schemas/weighing'
import type { MySubmission, RoomLiveState, WeighingInfo } from '../../shared/types/realtime'
import { GROUP_RULES } from '../../shared/types/engine'
import { achievementWeights, aspirationFavourite, aspirationProblem, medianAspiration, unsupportedAmong } from '../../shared/utils/aspirations'
import { groupStanding } from '../../shared/utils/group'
import { weightsFromRanking } from '../../shared/utils/ranking'
import { normaliseWeights, weightedSumFavourite } from '../../shared/utils/scalarise'
import type { Tx } from './db'

export function weighingInfo(w: Weighing, version: Pick<LedgerVersion, 'number' | 'hash'>): WeighingInfo {
  return {
    id: w.id,
    number: w.number,
    status: w.status,
    inputStyle: w.inputStyle,
    showNames: w.showNames,
    ledgerVersion: version.number,
    ledgerHash: version.hash.slice(0, 12),
    openedAt: w.openedAt.toISOString(),
    closesAt: w.closesAt?.toISOString() ?? null,
    closedAt: w.closedAt?.toISOString() ?? null,
    revealedAt: w.revealedAt?.toISOString() ?? null,
  }
}

const latestWeighing = (roomId: string, db: Tx | ReturnType<typeof useDb> = useDb()) => db
  .select({ weighing: weighings, version: { number: ledgerVersions.number, hash: ledgerVersions.hash } })
  .from(weighings)
  .innerJoin(ledgerVersions, eq(ledgerVersions.id, weighings.ledgerVersionId))
  .where(eq(weighings.roomId, roomId))
  .orderBy(desc(weighings.number))
  .limit(1)
  .then(rows => rows[0])

/** The room's live state: the open (or latest) weighing and how many have submitted to it. */
export async function liveState(roomId: string): Promise<RoomLiveState> {
  const db = useDb()
  const latest = await latestWeighing(roomId)
  const [eligible] = await db.select({ n: count() }).from(roomMembers).where(and(eq(roomMembers.roomId, roomId), eq(roomMembers.role, 'stakeholder')))
  let submitted = 0
  if (latest) {
    const [row] = await db.select({ n: count() }).from(submissions).where(eq(submissions.weighingId, latest.weighing.id))
    submitted = row?.n ?? 0
  }
  return {
    roomId,
    weighing: latest ? weighingInfo(latest.weighing, latest.version) : null,
    submitted,
    eligible: eligible?.n ?? 0,
  }
}

/** Names of those who submitted to a weighing, for the facilitator (never their weights). */
export async function submittedNames(weighingId: string) {
  const rows = await useDb().select({ name: users.displayName }).from(submissions).innerJoin(users, eq(users.id, submissions.userId))
    .where(eq(submissions.weighingId, weighingId)).orderBy(asc(users.displayName))
  return rows.map(r => r.name)
}

export function mySubmissionOf(row: Submission): MySubmission {
  return {
    weighingId: row.weighingId,
    weights: row.weights,
    ranking: row.ranking ?? null,
    aspirations: row.aspirations ?? null,
    idempotencyKey: row.idempotencyKey,
    revision: row.revision,
    submittedAt: row.submittedAt.toISOString(),
  }
}

export async function mySubmission(roomId: string, userId: string): Promise<MySubmission | null> {
  const latest = await latestWeighing(roomId)
  if (!latest) return null
  const [row] = await useDb().select().from(submissions).where(and(eq(submissions.weighingId, latest.weighing.id), eq(submissions.userId, userId)))
  return row ? mySubmissionOf(row) : null
}

/**
 * Open a weighing on the room's current ledger version. One open weighing per room (409);
 * the ledger needs at least one efficient alternative (409). A draft room goes live.
 */
export async function openWeighing(roomId: string, userId: string, body: OpenWeighingBody) {
  return useDb().transaction(async (tx) => {
    const [room] = await tx.select({ status: rooms.status }).from(rooms).where(eq(rooms.id, roomId)).for('update')
    if (!room) throw createError({ statusCode: 404, message: 'No such room.' })
    if (room.status === 'decided' || room.status === 'archived') throw createError({ statusCode: 409, message: 'This room has decided; no more weighings can be opened.' })
    const version = await currentLedgerVersion(roomId, tx)
    if (!version || version.alternatives.length === 0) throw createError({ statusCode: 409, message: 'The ledger has no alternatives yet: prepare it before opening a weighing.' })
    if (analysisOf(version).efficientIds.length === 0) throw createError({ statusCode: 409, message: 'No alternative is within the limits: correct the ledger before opening a weighing.' })
    const latest = await latestWeighing(roomId, tx)
    if (latest?.weighing.status === 'open') throw createError({ statusCode: 409, message: `Weighing ${latest.weighing.number} is still open: close it first.` })
    const [weighing] = await tx.insert(weighings).values({
      roomId,
      number: (latest?.weighing.number ?? 0) + 1,
      ledgerVersionId: version.id,
      inputStyle: body.inputStyle,
      showNames: body.showNames,
      closesAt: body.minutes ? sql`now() + make_interval(mins => ${body.minutes})` : null,
      openedBy: userId,
    }).returning()
    if (room.status === 'draft') await tx.update(rooms).set({ status: 'live', updatedAt: sql`now()` }).where(eq(rooms.id, roomId))
    await audit({ actorId: userId, roomId, action: 'weighing.opened', details: { number: weighing!.number, ledgerVersion: version.number, inputStyle: body.inputStyle, showNames: body.showNames, minutes: body.minutes ?? null } }, tx)
    return weighingInfo(weighing!, version)
  })
}

/**
 * The weighing row, locked for the rest of `tx`, with its ledger version; 404 when not this room's.
 * `share` for submissions (many commit side by side; closing waits for them, and they wait for a
 * close), `update` for closing and revealing.
 */
async function lockedWeighing(tx: Tx, roomId: string, weighingId: string, strength: 'update' | 'share' = 'update') {
  const [row] = await tx.select({ weighing: weighings, version: ledgerVersions }).from(weighings)
    .innerJoin(ledgerVersions, eq(ledgerVersions.id, weighings.ledgerVersionId))
    .where(and(eq(weighings.id, weighingId), eq(weighings.roomId, roomId)))
    .for(strength, { of: weighings })
  if (!row) throw createError({ statusCode: 404, message: 'No such weighing in this room.' })
  return row
}

export async function closeWeighing(roomId: string, weighingId: string, userId: string) {
  return useDb().transaction(async (tx) => {
    const { weighing, version } = await lockedWeighing(tx, roomId, weighingId)
    if (weighing.status !== 'open') throw createError({ statusCode: 409, message: `Weighing ${weighing.number} is already closed.` })
    const [closed] = await tx.update(weighings).set({ status: 'closed', closedAt: sql`now()` }).where(eq(weighings.id, weighingId)).returning()
    const [submitted] = await tx.select({ n: count() }).from(submissions).where(eq(submissions.weighingId, weighingId))
    await audit({ actorId: userId, roomId, action: 'weighing.closed', details: { number: weighing.number, submissions: submitted?.n ?? 0 } }, tx)
    return weighingInfo(closed!, version)
  })
}

export async function revealWeighing(roomId: string, weighingId: string, userId: string) {
  return useDb().transaction(async (tx) => {
    const { weighing, version } = await lockedWeighing(tx, roomId, weighingId)
    if (weighing.status === 'open') throw createError({ statusCode: 409, message: `Close weighing ${weighing.number} before revealing it.` })
    if (weighing.status === 'revealed') throw createError({ statusCode: 409, message: `Weighing ${weighing.number} is already revealed.` })
    const [revealed] = await tx.update(weighings).set({ status: 'revealed', revealedAt: sql`now()` }).where(eq(weighings.id, weighingId)).returning()
    await audit({ actorId: userId, roomId, action: 'weighing.revealed', details: { number: weighing.number } }, tx)
    return weighingInfo(revealed!, version)
  })
}

/** Criterion weights from a ranking of criterion ids (each exactly once; nested arrays tie). */
export function weightsOfRanking(ranking: (string | string[])[], criterionIds: readonly string[]): number[] {
  const rankOf = new Map<string, number>()
  ranking.forEach((entry, position) => {
    for (const id of [entry].flat()) {
      if (rankOf.has(id)) throw createError({ statusCode: 400, message: `The ranking names “${id}” twice.` })
      rankOf.set(id, position)
    }
  })
  const missing = criterionIds.filter(id => !rankOf.has(id))
  const unknown = [...rankOf.keys()].filter(id => !criterionIds.includes(id))
  if (missing.length || unknown.length) {
    throw createError({ statusCode: 400, message: missing.length ? `Rank every criterion: ${missing.join(', ')} ${missing.length === 1 ? 'is' : 'are'} missing.` : `Unknown criteria in the ranking: ${unknown.join(', ')}.` })
  }
  return weightsFromRanking(criterionIds.map(id => rankOf.get(id)!))
}

/** How many replaced idempotency keys a submission or ballot remembers (a resend older than that is not expected). */
export const KEPT_EARLIER_KEYS = 100

/** The earlier keys after `row` is replaced: its own key joins them, the oldest drop off. */
export const keptKeys = (row: { idempotencyKey: string, earlierKeys: string[] }) => [...row.earlierKeys, row.idempotencyKey].slice(-KEPT_EARLIER_KEYS)

/**
 * Store a stakeholder's weights in an open weighing, replacing their earlier submission.
 * Idempotent: the same idempotency key returns the stored submission and changes nothing, so a
 * phone that resends after a reconnect is never counted twice; the key of a submission already
 * replaced returns the later one marked `superseded`, and changes nothing either. The weighing row is share-locked,
 * so a submission is either in before the weighing closes or refused. Acknowledged only after commit.
 */
export async function submitWeights(userId: string, body: SubmitWeightsBody): Promise<{ submission: MySubmission, changed: boolean }> {
  return useDb().transaction(async (tx) => {
    const { weighing, version } = await lockedWeighing(tx, body.roomId, body.weighingId, 'share')
    // One stakeholder's submissions to one weighing go one at a time (two tabs, or a resend racing
    // its original), so the revision count and the one-row-per-person rule hold without a retry.
    await tx.execute(sql`select pg_advisory_xact_lock(hashtextextended(${`submission:${weighing.id}:${userId}`}, 0))`)
    const [existing] = await tx.select().from(submissions).where(and(eq(submissions.weighingId, weighing.id), eq(submissions.userId, userId)))
    if (existing && existing.idempotencyKey === body.idempotencyKey) return { submission: mySubmissionOf(existing), changed: false }
    // A resend of a submission that a later one already replaced (say, held up in a process that
    // failed over) must not bring the older weights back: answer with the later one, store nothing.
    if (existing?.earlierKeys.includes(body.idempotencyKey)) return { submission: { ...mySubmissionOf(existing), superseded: true }, changed: false }
    if (weighing.status !== 'open') throw createError({ statusCode: 409, message: `Weighing ${weighing.number} is closed; your weights were not recorded.` })
    if (weighing.closesAt && weighing.closesAt.getTime() <= Date.now()) throw createError({ statusCode: 409, message: `Weighing ${weighing.number}'s time is up; your weights were not recorded.` })
    const criterionIds = version.criteria.map(c => c.id)
    const wantsTargets = weighing.inputStyle === 'aspirations'
    if (wantsTargets !== (body.aspirations !== undefined)) {
      throw createError({ statusCode: 400, message: wantsTargets ? `Weighing ${weighing.number} asks for a target per criterion, not weights.` : `Weighing ${weighing.number} asks for weights, not targets.` })
    }
    let weights: number[]
    if (body.aspirations) {
      const problem = aspirationProblem(analysisOf(version), body.aspirations)
      if (problem) throw createError({ statusCode: 400, message: problem.message, data: { criterionId: problem.criterionId } })
      // The achievement function's weights: equal, on the normalised scale (shared/utils/aspirations.ts).
      weights = achievementWeights(criterionIds.length)
    }
    else if (body.ranking) {
      weights = weightsOfRanking(body.ranking, criterionIds)
    }
    else {
      if (body.weights!.length !== criterionIds.length) throw createError({ statusCode: 400, message: `Expected ${criterionIds.length} weights (one per criterion), got ${body.weights!.length}.` })
      try {
        weights = Array.from(normaliseWeights(body.weights!, criterionIds.length))
      }
      catch (error) {
        throw createError({ statusCode: 400, message: (error as Error).message })
      }
    }
    const values = { weights, ranking: body.ranking ?? null, aspirations: body.aspirations ?? null, idempotencyKey: body.idempotencyKey, submittedAt: new Date() }
    const [row] = existing
      ? await tx.update(submissions).set({ ...values, revision: existing.revision + 1, earlierKeys: keptKeys(existing) }).where(eq(submissions.id, existing.id)).returning()
      : await tx.insert(submissions).values({ ...values, weighingId: weighing.id, userId }).returning()
    await audit({ actorId: userId, roomId: body.roomId, action: 'weights.submitted', details: { weighing: weighing.number, revision: row!.revision, style: body.aspirations ? 'aspirations' : body.ranking ? 'ranking' : 'sliders' } }, tx)
    return { submission: mySubmissionOf(row!), changed: true }
  })
}

/**
 * The rows of an anonymous weighing in the order their "Stakeholder k" labels follow. Not the
 * order of submission, which a facilitator who watched the names arrive could match to the labels:
 * a shuffle keyed by SHA-256 of the weighing id and each submission's row id. That id is random,
 * stays with the person's submission through every revision, and never leaves the server (unlike
 * user ids, which the member list shows), so the order is the same on every call — console and
 * minutes agree — yet cannot be recomputed from outside.
 */
export function anonymousOrder<T extends { id: string }>(weighingId: string, rows: readonly T[]): T[] {
  const keyOf = (row: T) => createHash('sha256').update(`anonymous-order:${weighingId}:${row.id}`).digest('hex')
  return rows.map(row => ({ row, key: keyOf(row) }))
    .sort((a, b) => (a.key < b.key ? -1 : a.key > b.key ? 1 : 0))
    .map(entry => entry.row)
}

/** Everything the room learns when a weighing is revealed. */
export async function weighingResults(roomId: string, weighingId: string) {
  const db = useDb()
  const [row] = await db.select({ weighing: weighings, version: ledgerVersions }).from(weighings)
    .innerJoin(ledgerVersions, eq(ledgerVersions.id, weighings.ledgerVersionId))
    .where(and(eq(weighings.id, weighingId), eq(weighings.roomId, roomId)))
  if (!row) throw createError({ statusCode: 404, message: 'No such weighing in this room.' })
  const { weighing, version } = row
  if (weighing.status !== 'revealed') throw createError({ statusCode: 409, message: `Weighing ${weighing.number} has not been revealed yet.` })
  const stored = await db.select({ id: submissions.id, weights: submissions.weights, aspirations: submissions.aspirations, name: users.displayName, submittedAt: submissions.submittedAt })
    .from(submissions).innerJoin(users, eq(users.id, submissions.userId))
    .where(eq(submissions.weighingId, weighingId)).orderBy(asc(submissions.submittedAt))
  const rows = weighing.showNames ? stored : anonymousOrder(weighingId, stored)
  const analysis = analysisOf(version)
  const names = new Map(version.alternatives.map(a => [a.id, a.name]))
  const byTargets = weighing.inputStyle === 'aspirations'
  // In reference-point mode each favourite is named by the achievement function on the stored
  // targets (a submission without them, impossible by construction, falls back to its weights).
  const weightings = rows.map((r, i) => {
    const favourite = byTargets && r.aspirations ? aspirationFavourite(analysis, r.aspirations) : weightedSumFavourite(analysis, r.weights)
    return {
      label: weighing.showNames ? r.name : `Stakeholder ${i + 1}`,
      weights: favourite.weights,
      favourites: favourite.winners,
      runnersUp: favourite.runnersUp,
      aspirations: byTargets ? (r.aspirations ?? null) : null,
      /** Favourites that no weighting of sliders can favour (only ever non-empty for targets). */
      unsupportedFavourites: unsupportedAmong(analysis, favourite.winners),
    }
  })
  const favouredBy: Record<string, number> = Object.fromEntries(analysis.efficientIds.map(id => [id, 0]))
  for (const w of weightings) for (const id of w.favourites) favouredBy[id]! += 1 / w.favourites.length
  // Weight-based group rules mean nothing for targets (every stored weighting is the equal one):
  // a targets round has no `group`, and `groupTargets` instead.
  const group = weightings.length === 0 || byTargets
    ? []
    : GROUP_RULES.map((rule) => {
        try {
          const standing = groupStanding(analysis, rows.map(r => r.weights), rule)
          return { rule, weights: standing.weights, dispersion: standing.dispersion, agreement: standing.agreement, favourites: standing.favourite.winners, runnersUp: standing.favourite.runnersUp, note: null as string | null }
        }
        catch (error) {
          return { rule, weights: null, dispersion: null, agreement: null, favourites: [], runnersUp: [], note: (error as Error).message }
        }
      })
  const targetPoints = weightings.flatMap(w => (w.aspirations ? [w.aspirations] : []))
  return {
    weighing: weighingInfo(weighing, version),
    criteria: version.criteria.map(c => ({ id: c.id, name: c.name, unit: c.unit, direction: c.direction, precision: c.precision ?? null })),
    alternatives: analysis.efficientIds.map(id => ({
      id,
      name: names.get(id)!,
      favouredBy: favouredBy[id]!,
      supported: analysis.alternatives.find(v => v.id === id)?.supported ?? null,
    })),
    weightings,
    group,
    groupTargets: byTargets && targetPoints.length > 0 ? groupTargetsOf(analysis, targetPoints) : null,
  }
}

/**
 * The group in a targets round: the median of each criterion's targets (resists one extreme
 * target; stays within what the stakeholders asked) and that point's favourite by the same
 * achievement function, with `agreement` the share of stakeholders whose own favourite it is.
 */
function groupTargetsOf(analysis: ReturnType<typeof analysisOf>, points: number[][]) {
  const aspirations = medianAspiration(points, analysis.normalised.p)
  const favourite = aspirationFavourite(analysis, aspirations)
  const agreeing = points.filter((point) => {
    const own = aspirationFavourite(analysis, point).winners
    return own.some(id => favourite.winners.includes(id))
  }).length
  return {
    rule: 'median-targets' as const,
    aspirations,
    favourites: favourite.winners,
    runnersUp: favourite.runnersUp,
    unsupportedFavourites: unsupportedAmong(analysis, favourite.winners),
    agreement: agreeing / points.length,
  }
}
export type WeighingResults = Awaited<ReturnType<typeof weighingResults>>

/** The weighings of a room, newest first, with their submission counts. */
export async function listWeighings(roomId: string) {
  const rows = await useDb().select({ weighing: weighings, version: { number: ledgerVersions.number, hash: ledgerVersions.hash }, submitted: sql<number>`(select count(*) from ${submissions} where ${submissions.weighingId} = ${weighings.id})`.mapWith(Number) })
    .from(weighings).innerJoin(ledgerVersions, eq(ledgerVersions.id, weighings.ledgerVersionId))
    .where(eq(weighings.roomId, roomId)).orderBy(desc(weighings.number))
  return rows.map(r => ({ ...weighingInfo(r.weighing, r.version), submitted: r.submitted }))
}
