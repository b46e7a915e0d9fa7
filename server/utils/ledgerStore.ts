import { and, desc, eq } from 'drizzle-orm'
import type { H3Event } from 'h3'
import { ledgerVersions, rooms, type LedgerVersion } from '../database/schema'
import type { Alternative, Criterion } from '../../shared/types/decision'
import type { LedgerView } from '../../shared/types/ledgerView'
import { shortHash } from '../../shared/utils/ledgerHash'
import { ledgerHash } from '../database/ledgerHash'
import { analyseLedger, validateLedger } from '../../shared/utils/ledger'
import type { Db, Tx } from './db'

/** The newest ledger version of a room, or undefined before the first save. */
export async function currentLedgerVersion(roomId: string, db: Db | Tx = useDb()): Promise<LedgerVersion | undefined> {
  const [row] = await db.select().from(ledgerVersions).where(eq(ledgerVersions.roomId, roomId)).orderBy(desc(ledgerVersions.number)).limit(1)
  return row
}

export interface SaveLedgerInput {
  roomId: string
  userId: string
  criteria: Criterion[]
  alternatives: Alternative[]
  baseVersion: number
  note?: string
  attachmentId?: string | null
}

/** Strip absent optional fields so the stored JSON is the same whichever form sent it. */
function cleanCriterion(c: Criterion): Criterion {
  return {
    id: c.id,
    name: c.name,
    unit: c.unit ?? '',
    direction: c.direction,
    lowest: c.lowest ?? null,
    highest: c.highest ?? null,
    precision: c.precision ?? null,
    description: c.description || null,
  }
}

/**
 * Store a new ledger version inside `tx`, or return the current one when nothing changed.
 * Refuses (and so writes nothing): a save based on an older version (409), a ledger the engine
 * cannot analyse (422, every problem listed by alternative and criterion), and a change of the
 * criteria once the room has left the draft stage (409).
 */
export async function saveLedgerVersion(tx: Tx, input: SaveLedgerInput): Promise<{ version: LedgerVersion, changed: boolean }> {
  // Serialise saves per room: the row lock makes "read current, insert next" atomic.
  const [room] = await tx.select({ status: rooms.status }).from(rooms).where(eq(rooms.id, input.roomId)).for('update')
  if (!room) throw createError({ statusCode: 404, message: 'No such room.' })
  const current = await currentLedgerVersion(input.roomId, tx)
  const currentNumber = current?.number ?? 0
  if (input.baseVersion !== currentNumber) {
    throw createError({ statusCode: 409, message: `The ledger changed while you were editing (it is now version ${currentNumber}). Reload it and make your change again.`, data: { currentVersion: currentNumber } })
  }
  const criteria = input.criteria.map(cleanCriterion)
  const alternatives = input.alternatives.map(a => ({ id: a.id, name: a.name, scores: a.scores }))
  const problems = validateLedger(criteria, alternatives)
  if (problems.length > 0) {
    throw createError({ statusCode: 422, message: `${problems.length} problem${problems.length === 1 ? '' : 's'} in the ledger: ${problems[0]!.message}`, data: { ledgerErrors: problems.slice(0, 200), total: problems.length } })
  }
  if (current && room.status !== 'draft' && JSON.stringify(current.criteria.map(cleanCriterion)) !== JSON.stringify(criteria)) {
    throw createError({ statusCode: 409, message: 'Criteria are fixed once the room has left preparation; alternatives can still be corrected.' })
  }
  const hash = ledgerHash(criteria, alternatives)
  if (current && current.hash === hash) return { version: current, changed: false }
  const [version] = await tx.insert(ledgerVersions).values({
    roomId: input.roomId,
    number: currentNumber + 1,
    hash,
    criteria,
    alternatives,
    note: input.note ?? '',
    attachmentId: input.attachmentId ?? null,
    createdBy: input.userId,
  }).returning()
  await audit({
    actorId: input.userId,
    roomId: input.roomId,
    action: 'ledger.version-created',
    details: { number: version!.number, hash: shortHash(hash), criteria: criteria.length, alternatives: alternatives.length, note: input.note ?? '' },
  }, tx)
  return { version: version!, changed: true }
}

/** Support LPs cost one LP per efficient alternative over all of them: above this front size they are skipped. */
export const SUPPORT_CHECK_MAX_FRONT = 300

// Versions never change, so their analysis can be kept; a few recent ones cover a meeting.
const analysisCache = new Map<string, ReturnType<typeof analyseLedger>>()

/** The engine's analysis of a version, computed once per process (versions never change). */
export function analysisOf(version: LedgerVersion) {
  let analysis = analysisCache.get(version.id)
  if (!analysis) {
    analysis = analyseLedger(version.criteria, version.alternatives, { support: false })
    if (analysis.efficientIds.length <= SUPPORT_CHECK_MAX_FRONT) analysis = analyseLedger(version.criteria, version.alternatives)
    analysisCache.set(version.id, analysis)
    if (analysisCache.size > 16) analysisCache.delete(analysisCache.keys().next().value!)
  }
  return analysis
}

/** What the ledger routes answer: the version, its content and the engine's narrowing of it. */
export function ledgerView(version: LedgerVersion | undefined): LedgerView {
  if (!version) return { version: null, criteria: [], alternatives: [], analysis: null }
  const analysis = version.alternatives.length > 0 ? analysisOf(version) : null
  return {
    version: { number: version.number, hash: version.hash, shortHash: shortHash(version.hash), note: version.note, createdAt: version.createdAt, attachmentId: version.attachmentId },
    criteria: version.criteria,
    alternatives: version.alternatives,
    analysis: analysis && {
      verdicts: analysis.alternatives,
      counts: analysis.counts,
      efficientIds: analysis.efficientIds,
      ideal: analysis.ideal,
      nadir: analysis.nadir,
    },
  }
}

/** The version named by `?version=N`, or the current one; 404 for a number the room does not have. */
export async function ledgerVersionFromQuery(event: H3Event, roomId: string) {
  const raw = getQuery(event).version
  if (raw === undefined) return currentLedgerVersion(roomId)
  const number = Number(raw)
  if (!Number.isInteger(number) || number < 1) throw createError({ statusCode: 400, message: 'version must be a whole number from 1.' })
  const [row] = await useDb().select().from(ledgerVersions).where(and(eq(ledgerVersions.roomId, roomId), eq(ledgerVersions.number, number)))
  if (!row) throw createError({ statusCode: 404, message: `This room has no ledger version ${number}.` })
  return row
}

/** A file name from the room title: letters, digits and dashes only. */
export function exportFileName(title: string, version: number) {
  const slug = title.normalize('NFKD').replace(/[^\w\s-]/g, '').trim().replace(/\s+/g, '-').toLowerCase().slice(0, 60) || 'room'
  return `${slug}-ledger-v${version}`
}
