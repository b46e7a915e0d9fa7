import { createHash } from 'node:crypto'
import { TransactionRollbackError } from 'drizzle-orm'
import { attachments } from '../../../../database/schema'
import { RoomParams } from '../../../../../shared/schemas/rooms'
import type { LedgerImportPreview } from '../../../../../shared/types/ledgerImport'

/** Problems sent with a preview or a refusal; all of them are counted in problemTotal and groups. */
const PROBLEMS_SENT = 500
/** Alternatives shown in a preview. */
const PREVIEW_ROWS = 200

/**
 * Upload the alternatives from a CSV or XLSX file (multipart: `file`, `mode`, `baseVersion`).
 * mode=preview: 200 with what the file gives and every problem, writing nothing.
 * mode=confirm: reads the file again; any problem → 422 (nothing written); otherwise one
 * transaction stores the file as an attachment and a new ledger version citing it → 201.
 * A file that gives exactly the current ledger answers 200 and stores nothing.
 */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'ledger:edit')
  const upload = await readLedgerUpload(event)

  const current = await currentLedgerVersion(id)
  if (!current || current.criteria.length === 0) {
    throw createError({ statusCode: 409, message: 'Define the criteria first: the file\'s columns are matched to the room\'s criteria.' })
  }
  const parsed = await parseLedgerFile(upload.file, current.criteria, current.alternatives)
  const preview: LedgerImportPreview = {
    filename: upload.file.filename,
    format: parsed.format,
    ...(parsed.delimiter ? { delimiter: parsed.delimiter } : {}),
    ...(parsed.decimalMark ? { decimalMark: parsed.decimalMark } : {}),
    ...(parsed.sheet ? { sheet: parsed.sheet } : {}),
    columns: parsed.columns,
    preview: parsed.alternatives.slice(0, PREVIEW_ROWS),
    previewRows: parsed.rows.slice(0, PREVIEW_ROWS),
    rowCount: parsed.rowCount,
    kept: parsed.kept,
    removed: parsed.removed,
    problems: parsed.problems.slice(0, PROBLEMS_SENT),
    problemTotal: parsed.problemTotal,
    groups: parsed.groups,
    baseVersion: current.number,
  }
  if (upload.mode === 'preview') return preview

  if (parsed.problemTotal > 0) {
    throw createError({
      statusCode: 422,
      message: `${parsed.problemTotal} problem${parsed.problemTotal === 1 ? '' : 's'} in ${upload.file.filename}; nothing was saved. ${parsed.problems[0]!.message}`,
      data: { ...preview, preview: [], previewRows: [] },
    })
  }

  const bytes = upload.file.bytes
  const sha256 = createHash('sha256').update(bytes).digest('hex')
  try {
    const version = await useDb().transaction(async (tx) => {
      const [attachment] = await tx.insert(attachments).values({
        roomId: id,
        filename: upload.file.filename,
        mediaType: parsed.mediaType,
        size: bytes.length,
        sha256,
        content: bytes,
        uploadedBy: user.id,
      }).returning({ id: attachments.id })
      const saved = await saveLedgerVersion(tx, {
        roomId: id,
        userId: user.id,
        criteria: current.criteria,
        alternatives: parsed.alternatives,
        baseVersion: upload.baseVersion,
        note: `Uploaded ${upload.file.filename}`,
        attachmentId: attachment!.id,
      })
      // Same ledger as now: keep nothing, not even the file (the rollback is caught below).
      if (!saved.changed) tx.rollback()
      await audit({
        actorId: user.id,
        roomId: id,
        action: 'ledger.uploaded',
        details: { filename: upload.file.filename, format: parsed.format, size: bytes.length, sha256, rows: parsed.rowCount, kept: parsed.kept, removed: parsed.removed.length, attachmentId: attachment!.id, version: saved.version.number },
      }, tx)
      return saved.version
    })
    // Every open page of the room reloads its table, as after a save in the editor.
    useRealtime()?.to(roomChannel(id)).emit('ledger:changed', { roomId: id, version: version.number })
    setResponseStatus(event, 201)
    return ledgerView(version)
  }
  catch (error) {
    if (error instanceof TransactionRollbackError) return ledgerView(current)
    throw error
  }
})
