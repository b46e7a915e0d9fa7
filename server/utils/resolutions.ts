/**
 * The resolution: the decision as the facilitator records it — the chosen alternative of one
 * ledger version, what the engine said of it, the rationale, conditions and dissent. Choosing an
 * alternative the engine found dominated or outside limits needs a written justification.
 *
 * A resolution can be edited until the secretary signs minutes citing it; signing freezes it
 * (`freezeResolution`, called by the minutes code in the signing transaction), after which the
 * database itself refuses any change (trigger `resolutions_frozen`) and corrections are new rows
 * whose `amends` names the record they correct. Every change is in the audit trail.
 */
import { and, desc, eq, sql } from 'drizzle-orm'
import { ledgerVersions, resolutions, rooms, users, votes, weighings, type LedgerVersion, type Resolution } from '../database/schema'
import type { EditResolutionBody, RecordResolutionBody } from '../../shared/schemas/resolution'
import type { AlternativeStatus } from '../../shared/types/decision'
import type { ResolutionView } from '../../shared/types/resolution'
import { displayStatusOf, statusReason, STATUS_VOCABULARY } from '../../shared/statusVocabulary'
import type { Db, Tx } from './db'

/** Statuses that need a justification when chosen. */
export const STATUSES_NEEDING_JUSTIFICATION: readonly AlternativeStatus[] = ['dominated', 'infeasible']

/** What the engine says of one alternative of a version: its status and the words for it. */
export function engineVerdictOf(version: LedgerVersion, alternativeId: string) {
  const analysis = analysisOf(version)
  const verdict = analysis.alternatives.find(v => v.id === alternativeId)
  if (!verdict) return null
  const names = new Map(version.alternatives.map(a => [a.id, a.name]))
  const entry = STATUS_VOCABULARY[displayStatusOf(verdict)]
  const reason = statusReason(verdict, version.criteria, id => names.get(id) ?? id)
  return { status: verdict.status, words: reason ? `${entry.word}${entry.joiner}${reason}` : entry.word }
}

function viewOf(row: Resolution, version: LedgerVersion, recordedBy: string | null): ResolutionView {
  const alternative = version.alternatives.find(a => a.id === row.alternativeId)
  return {
    id: row.id,
    amends: row.amends,
    ledgerVersion: version.number,
    ledgerHash: version.hash.slice(0, 12),
    alternativeId: row.alternativeId,
    alternativeName: alternative?.name ?? row.alternativeId,
    engineStatus: row.engineStatus as AlternativeStatus,
    engineWords: engineVerdictOf(version, row.alternativeId)?.words ?? row.engineStatus,
    justification: row.justification,
    rationale: row.rationale,
    conditions: row.conditions,
    dissent: row.dissent,
    recordedBy: recordedBy ?? '',
    recordedAt: row.recordedAt.toISOString(),
    frozenAt: row.frozenAt?.toISOString() ?? null,
  }
}

const withVersion = (db: Db | Tx) => db
  .select({ resolution: resolutions, version: ledgerVersions, recordedBy: users.displayName })
  .from(resolutions)
  .innerJoin(ledgerVersions, eq(ledgerVersions.id, resolutions.ledgerVersionId))
  .leftJoin(users, eq(users.id, resolutions.recordedBy))

/** Every resolution of a room (amendments included), newest first. */
export async function listResolutions(roomId: string, db: Db | Tx = useDb()): Promise<ResolutionView[]> {
  const rows = await withVersion(db).where(eq(resolutions.roomId, roomId)).orderBy(desc(resolutions.recordedAt))
  return rows.map(r => viewOf(r.resolution, r.version, r.recordedBy))
}

/** The room's current resolution: the newest record (an amendment supersedes what it amends), or null. */
export async function currentResolution(roomId: string, db: Db | Tx = useDb()): Promise<ResolutionView | null> {
  const [row] = await withVersion(db).where(eq(resolutions.roomId, roomId)).orderBy(desc(resolutions.recordedAt)).limit(1)
  return row ? viewOf(row.resolution, row.version, row.recordedBy) : null
}

/** One resolution of a room; 404 when it is not this room's. */
export async function getResolution(roomId: string, resolutionId: string, db: Db | Tx = useDb()): Promise<ResolutionView> {
  const [row] = await withVersion(db).where(and(eq(resolutions.id, resolutionId), eq(resolutions.roomId, roomId)))
  if (!row) throw createError({ statusCode: 404, message: 'No such resolution in this room.' })
  return viewOf(row.resolution, row.version, row.recordedBy)
}

const fieldError = (statusCode: number, field: string, message: string) => createError({ statusCode, message, data: { fieldErrors: { [field]: message } } })

/** The engine's status of the chosen alternative; 400 when it is not in the version, or when a justification is needed and missing. */
function checkChoice(version: LedgerVersion, alternativeId: string, justification: string | null | undefined) {
  const verdict = engineVerdictOf(version, alternativeId)
  if (!verdict) throw fieldError(400, 'alternativeId', `Ledger version ${version.number} has no alternative “${alternativeId}”.`)
  const needed = STATUSES_NEEDING_JUSTIFICATION.includes(verdict.status)
  if (needed && !justification?.trim()) {
    throw fieldError(400, 'justification', `The engine found this alternative ${verdict.words.charAt(0).toLowerCase()}${verdict.words.slice(1)}. Write why the room chooses it anyway.`)
  }
  return { status: verdict.status, justification: justification?.trim() || null }
}

async function versionByNumber(tx: Tx, roomId: string, number: number | undefined) {
  if (number === undefined) {
    const version = await currentLedgerVersion(roomId, tx)
    if (!version) throw createError({ statusCode: 409, message: 'The room has no ledger yet: there is nothing to choose from.' })
    return version
  }
  const [version] = await tx.select().from(ledgerVersions).where(and(eq(ledgerVersions.roomId, roomId), eq(ledgerVersions.number, number)))
  if (!version) throw fieldError(400, 'ledgerVersion', `This room has no ledger version ${number}.`)
  return version
}

/**
 * Record the room's decision (or, with `amends`, a correction of a frozen one). Refused (409,
 * nothing written) while a weighing or a vote is open, when the room already has a resolution and
 * this is not an amendment (edit it while unsigned; amend it once signed), and when `amends` does
 * not name the room's current, frozen resolution. The room moves to "decided".
 */
export async function recordResolution(roomId: string, userId: string, body: RecordResolutionBody): Promise<ResolutionView> {
  return useDb().transaction(async (tx) => {
    const [room] = await tx.select({ status: rooms.status }).from(rooms).where(eq(rooms.id, roomId)).for('update')
    if (!room) throw createError({ statusCode: 404, message: 'No such room.' })
    const [weighingOpen] = await tx.select({ number: weighings.number }).from(weighings).where(and(eq(weighings.roomId, roomId), eq(weighings.status, 'open')))
    if (weighingOpen) throw createError({ statusCode: 409, message: `Weighing ${weighingOpen.number} is still open: close it before recording the decision.` })
    const [voteOpen] = await tx.select({ id: votes.id }).from(votes).where(and(eq(votes.roomId, roomId), eq(votes.status, 'open')))
    if (voteOpen) throw createError({ statusCode: 409, message: 'The vote is still open: close it before recording the decision.' })
    const current = await currentResolution(roomId, tx)
    if (body.amends) {
      if (!current || current.id !== body.amends) {
        const [named] = await tx.select({ id: resolutions.id }).from(resolutions).where(and(eq(resolutions.id, body.amends), eq(resolutions.roomId, roomId)))
        if (!named) throw fieldError(400, 'amends', 'That resolution is not in this room.')
        throw createError({ statusCode: 409, message: 'That record has been amended already: amend the newest record instead.' })
      }
      if (!current.frozenAt) throw createError({ statusCode: 409, message: 'That record is not signed yet: edit it instead of amending it.' })
    }
    else if (current) {
      throw createError({ statusCode: 409, message: current.frozenAt ? 'The decision is recorded and signed: record an amendment that names it.' : 'The decision is already recorded: edit it until the minutes are signed.' })
    }
    const version = await versionByNumber(tx, roomId, body.ledgerVersion)
    const { status, justification } = checkChoice(version, body.alternativeId, body.justification)
    const [row] = await tx.insert(resolutions).values({
      roomId,
      amends: body.amends ?? null,
      ledgerVersionId: version.id,
      alternativeId: body.alternativeId,
      engineStatus: status,
      justification,
      rationale: body.rationale,
      conditions: body.conditions,
      dissent: body.dissent,
      recordedBy: userId,
    }).returning()
    if (room.status !== 'decided' && room.status !== 'archived') await tx.update(rooms).set({ status: 'decided', updatedAt: sql`now()` }).where(eq(rooms.id, roomId))
    await audit({
      actorId: userId,
      roomId,
      action: body.amends ? 'resolution.amended' : 'resolution.recorded',
      details: { resolution: row!.id, amends: body.amends ?? null, ledgerVersion: version.number, alternative: body.alternativeId, engineStatus: status, justified: justification !== null },
    }, tx)
    const [me] = await tx.select({ name: users.displayName }).from(users).where(eq(users.id, userId))
    return viewOf(row!, version, me?.name ?? null)
  })
}

/** Whether an error is the database's refusal to change a frozen resolution. */
function isFrozenRefusal(error: unknown) {
  const messages = [error, (error as { cause?: unknown })?.cause].map(e => String((e as Error | undefined)?.message ?? ''))
  return messages.some(m => /is frozen/.test(m))
}

/**
 * Change a resolution that is not frozen yet (only the fields sent). A frozen one answers 409:
 * record an amendment instead. Changing the alternative re-reads the engine's status in the same
 * ledger version; a justification stays required for a dominated or infeasible choice.
 */
export async function editResolution(roomId: string, resolutionId: string, userId: string, body: EditResolutionBody): Promise<ResolutionView> {
  try {
    return await useDb().transaction(async (tx) => {
      const [row] = await tx.select({ resolution: resolutions, version: ledgerVersions }).from(resolutions)
        .innerJoin(ledgerVersions, eq(ledgerVersions.id, resolutions.ledgerVersionId))
        .where(and(eq(resolutions.id, resolutionId), eq(resolutions.roomId, roomId)))
        .for('update', { of: resolutions })
      if (!row) throw createError({ statusCode: 404, message: 'No such resolution in this room.' })
      if (row.resolution.frozenAt) throw createError({ statusCode: 409, message: 'This resolution is frozen: the minutes citing it are signed. Record an amendment instead.' })
      const next = {
        alternativeId: body.alternativeId ?? row.resolution.alternativeId,
        rationale: body.rationale ?? row.resolution.rationale,
        conditions: body.conditions ?? row.resolution.conditions,
        dissent: body.dissent ?? row.resolution.dissent,
        justification: body.justification === undefined ? row.resolution.justification : body.justification,
      }
      const { status, justification } = checkChoice(row.version, next.alternativeId, next.justification)
      const changed = (Object.keys(body) as (keyof EditResolutionBody)[]).filter(k => body[k] !== undefined && body[k] !== row.resolution[k])
      const [updated] = await tx.update(resolutions).set({ ...next, justification, engineStatus: status }).where(eq(resolutions.id, resolutionId)).returning()
      await audit({ actorId: userId, roomId, action: 'resolution.edited', details: { resolution: resolutionId, fields: changed, alternative: next.alternativeId, engineStatus: status } }, tx)
      const [recorder] = updated!.recordedBy ? await tx.select({ name: users.displayName }).from(users).where(eq(users.id, updated!.recordedBy)) : []
      return viewOf(updated!, row.version, recorder?.name ?? null)
    })
  }
  catch (error) {
    if (isFrozenRefusal(error)) throw createError({ statusCode: 409, message: 'This resolution is frozen: the minutes citing it are signed. Record an amendment instead.' })
    throw error
  }
}

/**
 * Freeze a resolution: from now on the database refuses any change to it. The minutes code calls
 * this inside its signing transaction (pass `tx`), so the record is frozen exactly when the signed
 * minutes citing it are stored. 404 for an unknown id, 409 when it is frozen already.
 */
export async function freezeResolution(resolutionId: string, actorId: string | null, tx?: Tx): Promise<ResolutionView> {
  const work = async (t: Tx) => {
    const [row] = await t.select({ frozenAt: resolutions.frozenAt, roomId: resolutions.roomId }).from(resolutions).where(eq(resolutions.id, resolutionId)).for('update')
    if (!row) throw createError({ statusCode: 404, message: 'No such resolution.' })
    if (row.frozenAt) throw createError({ statusCode: 409, message: 'This resolution is frozen already: its minutes are signed.' })
    await t.update(resolutions).set({ frozenAt: sql`now()` }).where(eq(resolutions.id, resolutionId))
    await audit({ actorId, roomId: row.roomId, action: 'resolution.frozen', details: { resolution: resolutionId } }, t)
    return getResolution(row.roomId, resolutionId, t)
  }
  return tx ? work(tx) : useDb().transaction(work)
}

/** Tell the room that its resolutions changed (never throws). */
export function announceResolutionChange(roomId: string) {
  try {
    useRealtime()?.to(roomChannel(roomId)).emit('resolution:changed', { roomId })
  }
  catch (error) {
    console.error('[realtime] resolution broadcast failed:', (error as Error).message)
  }
}
