/**
 * The final vote: stakeholders approve, object to or abstain on each alternative of a shortlist
 * from one ledger version. It follows the weighings' pattern (server/utils/weighings.ts): one open
 * vote per room, one ballot per stakeholder (casting again replaces it, with a new revision, until
 * the vote closes), an idempotency key so a resend after a reconnect changes nothing, a row lock on
 * the vote so a ballot is either in before the close or refused, acknowledged only after commit,
 * and an audit entry for every change.
 *
 * Who sees what: everyone in the room sees the tally (counts per alternative, how many have cast).
 * Who chose what is shown to facilitators only, and only when the room shows names — that is, when
 * the room has weighed at least once and every weighing was opened with names shown. A room that
 * chose anonymity for any weighing keeps its ballots anonymous too.
 */
import { and, asc, count, desc, eq, sql } from 'drizzle-orm'
import { ballots, ledgerVersions, roomMembers, rooms, users, votes, weighings, type Ballot, type LedgerVersion, type Vote } from '../database/schema'
import type { CastBallotBody, OpenVoteBody } from '../../shared/schemas/resolution'
import { MAX_SHORTLIST } from '../../shared/schemas/resolution'
import type { MyBallot, VoteView } from '../../shared/types/resolution'
import { tallyBallots } from '../../shared/utils/tally'
import type { Db, Tx } from './db'

type VersionRef = Pick<LedgerVersion, 'number' | 'hash' | 'alternatives'>

/**
 * Whether the room shows names: it has at least one weighing and every one of them was opened with
 * names shown. Before any weighing, and after any anonymous one, it does not.
 */
export async function roomShowsNames(roomId: string, db: Db | Tx = useDb()): Promise<boolean> {
  const [row] = await db.select({ all: count(), named: sql<number>`count(*) filter (where ${weighings.showNames})`.mapWith(Number) })
    .from(weighings).where(eq(weighings.roomId, roomId))
  return (row?.all ?? 0) > 0 && row!.named === row!.all
}

/** The tally without who chose what, for everyone but facilitators. */
export function withoutBallots(vote: VoteView): VoteView {
  const copy = { ...vote }
  delete copy.ballots
  return copy
}

export function myBallotOf(row: Ballot): MyBallot {
  return {
    voteId: row.voteId,
    choices: row.choices,
    idempotencyKey: row.idempotencyKey,
    revision: row.revision,
    castAt: row.castAt.toISOString(),
  }
}

/** The vote as the room sees it, with its tally; `withBallots` adds who chose what (only when the room shows names). */
async function viewOf(vote: Vote, version: VersionRef, { withBallots = false, db = useDb() as Db | Tx } = {}): Promise<VoteView> {
  const [eligible] = await db.select({ n: count() }).from(roomMembers).where(and(eq(roomMembers.roomId, vote.roomId), eq(roomMembers.role, 'stakeholder')))
  const rows = await db.select({ choices: ballots.choices, name: users.displayName }).from(ballots)
    .innerJoin(users, eq(users.id, ballots.userId))
    .where(eq(ballots.voteId, vote.id)).orderBy(asc(users.displayName))
  const names = new Map(version.alternatives.map(a => [a.id, a.name]))
  const namesShown = await roomShowsNames(vote.roomId, db)
  const view: VoteView = {
    id: vote.id,
    status: vote.status,
    ledgerVersion: version.number,
    ledgerHash: version.hash.slice(0, 12),
    shortlist: vote.shortlist,
    openedAt: vote.openedAt.toISOString(),
    closedAt: vote.closedAt?.toISOString() ?? null,
    cast: rows.length,
    eligible: eligible?.n ?? 0,
    tally: tallyBallots(vote.shortlist, id => names.get(id) ?? id, rows),
    namesShown,
  }
  if (withBallots && namesShown) view.ballots = rows.map(r => ({ name: r.name, choices: r.choices }))
  return view
}

const voteWithVersion = (db: Db | Tx) => db
  .select({ vote: votes, version: { number: ledgerVersions.number, hash: ledgerVersions.hash, alternatives: ledgerVersions.alternatives } })
  .from(votes)
  .innerJoin(ledgerVersions, eq(ledgerVersions.id, votes.ledgerVersionId))

/** The room's open vote, or else its latest one; null before the first. */
export async function currentVote(roomId: string, options: { withBallots?: boolean } = {}): Promise<VoteView | null> {
  const [row] = await voteWithVersion(useDb()).where(eq(votes.roomId, roomId))
    .orderBy(sql`${votes.status} = 'open' desc`, desc(votes.openedAt)).limit(1)
  return row ? viewOf(row.vote, row.version, options) : null
}

/** The room's most recently closed vote with its final tally (what the minutes cite), or null. */
export async function latestClosedVote(roomId: string, options: { withBallots?: boolean } = {}): Promise<VoteView | null> {
  const [row] = await voteWithVersion(useDb()).where(and(eq(votes.roomId, roomId), eq(votes.status, 'closed')))
    .orderBy(desc(votes.closedAt)).limit(1)
  return row ? viewOf(row.vote, row.version, options) : null
}

/** One vote of a room; 404 when it is not this room's. */
export async function voteView(roomId: string, voteId: string, options: { withBallots?: boolean } = {}): Promise<VoteView> {
  const [row] = await voteWithVersion(useDb()).where(and(eq(votes.id, voteId), eq(votes.roomId, roomId)))
  if (!row) throw createError({ statusCode: 404, message: 'No such vote in this room.' })
  return viewOf(row.vote, row.version, options)
}

/** Every vote of a room, newest first. */
export async function listVotes(roomId: string, options: { withBallots?: boolean } = {}): Promise<VoteView[]> {
  const rows = await voteWithVersion(useDb()).where(eq(votes.roomId, roomId)).orderBy(desc(votes.openedAt))
  return Promise.all(rows.map(r => viewOf(r.vote, r.version, options)))
}

/** The caller's ballot in the room's current vote (open, or else latest), or null. */
export async function myBallot(roomId: string, userId: string): Promise<MyBallot | null> {
  const db = useDb()
  const [current] = await db.select({ id: votes.id }).from(votes).where(eq(votes.roomId, roomId))
    .orderBy(sql`${votes.status} = 'open' desc`, desc(votes.openedAt)).limit(1)
  if (!current) return null
  const [row] = await db.select().from(ballots).where(and(eq(ballots.voteId, current.id), eq(ballots.userId, userId)))
  return row ? myBallotOf(row) : null
}

/**
 * Open the final vote on the room's current ledger version. The shortlist names alternatives of
 * that version (400 naming any it does not have); without one, the ballot holds its efficient
 * alternatives. One open vote per room (409); a decided room opens none (409).
 */
export async function openVote(roomId: string, userId: string, body: OpenVoteBody): Promise<VoteView> {
  return useDb().transaction(async (tx) => {
    const [room] = await tx.select({ status: rooms.status }).from(rooms).where(eq(rooms.id, roomId)).for('update')
    if (!room) throw createError({ statusCode: 404, message: 'No such room.' })
    if (room.status === 'decided' || room.status === 'archived') throw createError({ statusCode: 409, message: 'This room has decided; no vote can be opened.' })
    const [open] = await tx.select({ id: votes.id }).from(votes).where(and(eq(votes.roomId, roomId), eq(votes.status, 'open')))
    if (open) throw createError({ statusCode: 409, message: 'A vote is already open: close it first.' })
    const version = await currentLedgerVersion(roomId, tx)
    if (!version || version.alternatives.length === 0) throw createError({ statusCode: 409, message: 'The ledger has no alternatives yet: prepare it before opening a vote.' })
    let shortlist: string[]
    if (body.shortlist) {
      const known = new Set(version.alternatives.map(a => a.id))
      const unknown = body.shortlist.filter(id => !known.has(id))
      if (unknown.length) {
        throw createError({ statusCode: 400, message: `Not in ledger version ${version.number}: ${unknown.join(', ')}.`, data: { fieldErrors: { shortlist: `Not in ledger version ${version.number}: ${unknown.join(', ')}.` } } })
      }
      shortlist = body.shortlist
    }
    else {
      shortlist = analysisOf(version).efficientIds
      if (shortlist.length === 0) throw createError({ statusCode: 409, message: 'No alternative is efficient: name the shortlist yourself.' })
      if (shortlist.length > MAX_SHORTLIST) throw createError({ statusCode: 400, message: `${shortlist.length} alternatives are efficient, more than a ballot holds (${MAX_SHORTLIST}): choose a shortlist.`, data: { fieldErrors: { shortlist: `Choose at most ${MAX_SHORTLIST} alternatives.` } } })
    }
    const [vote] = await tx.insert(votes).values({ roomId, ledgerVersionId: version.id, shortlist, openedBy: userId }).returning()
    if (room.status === 'draft') await tx.update(rooms).set({ status: 'live', updatedAt: sql`now()` }).where(eq(rooms.id, roomId))
    await audit({ actorId: userId, roomId, action: 'vote.opened', details: { vote: vote!.id, ledgerVersion: version.number, shortlist } }, tx)
    return viewOf(vote!, version, { db: tx })
  })
}

/** The vote row, locked for the rest of `tx`, with its ledger version; 404 when not this room's. */
async function lockedVote(tx: Tx, roomId: string, voteId: string) {
  const [row] = await tx.select({ vote: votes, version: ledgerVersions }).from(votes)
    .innerJoin(ledgerVersions, eq(ledgerVersions.id, votes.ledgerVersionId))
    .where(and(eq(votes.id, voteId), eq(votes.roomId, roomId)))
    .for('update', { of: votes })
  if (!row) throw createError({ statusCode: 404, message: 'No such vote in this room.' })
  return row
}

/** Close an open vote (409 when already closed); its tally is final from then on. */
export async function closeVote(roomId: string, voteId: string, userId: string): Promise<VoteView> {
  return useDb().transaction(async (tx) => {
    const { vote, version } = await lockedVote(tx, roomId, voteId)
    if (vote.status !== 'open') throw createError({ statusCode: 409, message: 'This vote is already closed.' })
    const [closed] = await tx.update(votes).set({ status: 'closed', closedAt: sql`now()` }).where(eq(votes.id, voteId)).returning()
    const view = await viewOf(closed!, version, { db: tx })
    await audit({ actorId: userId, roomId, action: 'vote.closed', details: { vote: voteId, cast: view.cast, eligible: view.eligible, tally: view.tally.map(r => ({ id: r.alternativeId, approve: r.approve, object: r.object, abstain: r.abstain })) } }, tx)
    return view
  })
}

/**
 * Store a stakeholder's ballot in an open vote, replacing their earlier one. Every alternative on
 * the ballot needs a choice, and only those (400 naming what is missing or unknown). Idempotent:
 * the same key returns the stored ballot and changes nothing, and the key of a ballot already
 * replaced returns the later one marked `superseded`. Refused once the vote is closed
 * (409). The caller checks the role; this checks the vote belongs to the room.
 */
export async function castBallot(userId: string, body: CastBallotBody): Promise<{ ballot: MyBallot, changed: boolean }> {
  return useDb().transaction(async (tx) => {
    const { vote } = await lockedVote(tx, body.roomId, body.voteId)
    const [existing] = await tx.select().from(ballots).where(and(eq(ballots.voteId, vote.id), eq(ballots.userId, userId)))
    if (existing && existing.idempotencyKey === body.idempotencyKey) return { ballot: myBallotOf(existing), changed: false }
    // A late resend of a ballot a later one already replaced: answer with the later one, store nothing.
    if (existing?.earlierKeys.includes(body.idempotencyKey)) return { ballot: { ...myBallotOf(existing), superseded: true }, changed: false }
    if (vote.status !== 'open') throw createError({ statusCode: 409, message: 'The vote is closed; your ballot was not recorded.' })
    const missing = vote.shortlist.filter(id => !(id in body.choices))
    const unknown = Object.keys(body.choices).filter(id => !vote.shortlist.includes(id))
    if (missing.length || unknown.length) {
      const message = missing.length
        ? `Choose approve, object or abstain for every alternative on the ballot: ${missing.join(', ')} ${missing.length === 1 ? 'has' : 'have'} no choice.`
        : `Not on the ballot: ${unknown.join(', ')}.`
      throw createError({ statusCode: 400, message, data: { fieldErrors: { choices: message } } })
    }
    // Stored in ballot order, whatever order the phone sent.
    const choices = Object.fromEntries(vote.shortlist.map(id => [id, body.choices[id]!]))
    const values = { choices, idempotencyKey: body.idempotencyKey, castAt: new Date() }
    const [row] = existing
      ? await tx.update(ballots).set({ ...values, revision: existing.revision + 1, earlierKeys: keptKeys(existing) }).where(eq(ballots.id, existing.id)).returning()
      : await tx.insert(ballots).values({ ...values, voteId: vote.id, userId }).returning()
    await audit({ actorId: userId, roomId: body.roomId, action: 'ballot.cast', details: { vote: vote.id, revision: row!.revision } }, tx)
    return { ballot: myBallotOf(row!), changed: true }
  })
}

/**
 * Send the current vote to the room: the tally to everyone, and (when the room shows names) who
 * chose what to its facilitators. Never throws: a failed broadcast must not undo a committed
 * change; clients re-sync when they next join.
 */
export async function broadcastVoteState(roomId: string) {
  const io = useRealtime()
  if (!io) return
  try {
    const vote = await freshRead(`vote:${roomId}:true`, () => currentVote(roomId, { withBallots: true }))
    io.to(roomChannel(roomId)).except(facilitatorChannel(roomId)).emit('vote:state', { roomId, vote: vote && withoutBallots(vote) })
    io.to(facilitatorChannel(roomId)).emit('vote:state', { roomId, vote })
  }
  catch (error) {
    console.error('[realtime] vote broadcast failed:', (error as Error).message)
  }
}
