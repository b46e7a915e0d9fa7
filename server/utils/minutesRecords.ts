/**
 * Signed minutes: signing (which freezes the resolution they cite), the records this server keeps,
 * looking one up by the SHA-256 of a file, and e-mailing one to the room's members.
 * The minutes_records table is append-only (a trigger refuses every change but the e-mail bookkeeping).
 */
import { createHash } from 'node:crypto'
import { and, desc, eq, sql } from 'drizzle-orm'
import { minutesRecords, resolutions, roomMembers, rooms, users, type MinutesRecord } from '../database/schema'
import type { MinutesRecordView } from '../../shared/types/resolution'
import { escapeHtml, sendMail } from './mail'
import { minutesContent } from './minutesContent'
import { minutesFileName, renderMinutesPdf } from './minutesPdf'
import { signPdf } from './pdfSigning'

/** What this server holds about minutes it signed, found by the signed file's SHA-256. */
export interface MinutesRecordMatch {
  roomTitle: string
  /** When the minutes were signed (ISO 8601). */
  signedAt: string
  /** Who signed them, as recorded here when they were signed (the secretary's display name then). */
  signer: string
}

/**
 * The minutes record whose signed PDF has this SHA-256 (lower-case hexadecimal), or null.
 * Only the room's title, the signing time and the signer's name are returned: the public check
 * page shows them, and nothing else about the room. (The signer's name is printed in the minutes
 * and in their signature already, so whoever holds the file knows it.)
 */
export async function findMinutesRecordBySha256(sha256: string): Promise<MinutesRecordMatch | null> {
  if (!/^[0-9a-f]{64}$/.test(sha256)) return null
  const [row] = await useDb().select({ roomTitle: rooms.title, signedAt: minutesRecords.signedAt, signer: minutesRecords.signer })
    .from(minutesRecords).innerJoin(rooms, eq(rooms.id, minutesRecords.roomId))
    .where(eq(minutesRecords.sha256, sha256))
  return row ? { roomTitle: row.roomTitle, signedAt: row.signedAt.toISOString(), signer: row.signer } : null
}

export function minutesRecordView(row: Omit<MinutesRecord, 'pdf'> & { bytes: number }): MinutesRecordView {
  return {
    id: row.id,
    resolutionId: row.resolutionId,
    sha256: row.sha256,
    signer: row.signer,
    signedAt: row.signedAt.toISOString(),
    fileName: row.fileName,
    bytes: row.bytes,
    sentAt: row.sentAt?.toISOString() ?? null,
    sentTo: row.sentTo,
  }
}

const recordColumns = {
  id: minutesRecords.id,
  roomId: minutesRecords.roomId,
  resolutionId: minutesRecords.resolutionId,
  sha256: minutesRecords.sha256,
  fileName: minutesRecords.fileName,
  signer: minutesRecords.signer,
  signedBy: minutesRecords.signedBy,
  signedAt: minutesRecords.signedAt,
  sentAt: minutesRecords.sentAt,
  sentTo: minutesRecords.sentTo,
  bytes: sql<number>`octet_length(${minutesRecords.pdf})`.mapWith(Number),
}

/** The room's signed minutes, newest first (without the files). */
export async function listMinutesRecords(roomId: string): Promise<MinutesRecordView[]> {
  const rows = await useDb().select(recordColumns).from(minutesRecords)
    .where(eq(minutesRecords.roomId, roomId)).orderBy(desc(minutesRecords.signedAt))
  return rows.map(minutesRecordView)
}

/** One record of the room with its file; 404 when the room has no such record. */
export async function minutesRecordFile(roomId: string, recordId: string) {
  const [row] = await useDb().select().from(minutesRecords).where(and(eq(minutesRecords.id, recordId), eq(minutesRecords.roomId, roomId)))
  if (!row) throw createError({ statusCode: 404, message: 'This room has no such signed minutes.' })
  return row
}

/**
 * Sign the minutes of the room's newest resolution, as `signer`, in one transaction: the
 * resolution row is locked, must not be frozen yet (409), the minutes are rendered from it and
 * signed, the exact bytes and their SHA-256 are stored, and the resolution is frozen.
 * 409 when nothing is recorded yet or the newest resolution is already signed.
 */
export async function signMinutes(roomId: string, signer: { id: string, displayName: string }) {
  return useDb().transaction(async (tx) => {
    const [newest] = await tx.select().from(resolutions).where(eq(resolutions.roomId, roomId))
      .orderBy(desc(resolutions.recordedAt), desc(resolutions.id)).limit(1).for('update')
    if (!newest) {
      throw createError({ statusCode: 409, message: 'There is no decision to sign yet: the facilitator records the resolution first, then the secretary signs the minutes.' })
    }
    if (newest.frozenAt) {
      throw createError({ statusCode: 409, message: `The minutes of this resolution were already signed on ${newest.frozenAt.toISOString().slice(0, 16).replace('T', ' ')} UTC; the record is frozen. To correct it, the facilitator records an amendment, which can then be signed.` })
    }
    const content = await minutesContent(roomId, { resolution: newest, db: tx })
    const unsigned = await renderMinutesPdf(content, { draft: false })
    const signed = await signPdf(unsigned, {
      signerName: signer.displayName,
      reason: `Minutes of “${content.room.title}”`,
      location: 'Counterpoise',
      contactInfo: '',
    })
    const sha256 = createHash('sha256').update(signed).digest('hex')
    const signedAt = new Date()
    const [record] = await tx.insert(minutesRecords).values({
      roomId,
      resolutionId: newest.id,
      sha256,
      pdf: signed,
      fileName: minutesFileName(content.room.title, signedAt),
      signer: signer.displayName,
      signedBy: signer.id,
      signedAt,
    }).returning()
    await tx.update(resolutions).set({ frozenAt: sql`now()` }).where(eq(resolutions.id, newest.id))
    await audit({ actorId: signer.id, roomId, action: 'minutes.signed', details: { record: record!.id, resolution: newest.id, sha256, bytes: signed.length, ledgerVersion: content.ledger.version } }, tx)
    const { pdf, ...rest } = record!
    return minutesRecordView({ ...rest, bytes: pdf.length })
  })
}

/**
 * E-mail a signed record, attached, to every member of the room (one message each, so addresses
 * are not shared), through the same SMTP path as invitations. Updates sent_at / sent_to and audits
 * once every message was accepted; 503 (and nothing recorded) when the mail server fails.
 */
export async function sendMinutesRecord(roomId: string, recordId: string, sender: { id: string, displayName: string }) {
  const record = await minutesRecordFile(roomId, recordId)
  const [room] = await useDb().select({ title: rooms.title, question: rooms.question }).from(rooms).where(eq(rooms.id, roomId))
  const members = await useDb().select({ email: users.email, name: users.displayName }).from(roomMembers)
    .innerJoin(users, eq(users.id, roomMembers.userId)).where(eq(roomMembers.roomId, roomId))
  const recipients = members.filter(m => m.email.includes('@'))
  if (recipients.length === 0) throw createError({ statusCode: 409, message: 'No member of this room has an e-mail address to send the minutes to.' })
  const signedAt = new Intl.DateTimeFormat('en-GB', { dateStyle: 'long', timeStyle: 'short', timeZone: 'UTC' }).format(record.signedAt)
  const subject = `Signed minutes of “${room!.title}”`
  let accepted = 0
  for (const to of recipients) {
    try {
      await sendMail({
        to: to.email,
        subject,
        text: [
          `Hello ${to.name},`,
          '',
          `${sender.displayName} sends you the signed minutes of “${room!.title}” (${room!.question}).`,
          `They were signed by ${record.signer} on ${signedAt} UTC. The PDF is attached.`,
          '',
          `SHA-256 of the file: ${record.sha256}`,
          'Anyone can check the signature, and whether the file matches the record kept by Counterpoise, on its “Check minutes” page.',
        ].join('\n'),
        html: `<!doctype html>
<html lang="en"><body style="font-family: Nunito, Arial, sans-serif; color: #12393a; line-height: 1.5">
<p>Hello ${escapeHtml(to.name)},</p>
<p>${escapeHtml(sender.displayName)} sends you the signed minutes of <strong>${escapeHtml(room!.title)}</strong> (${escapeHtml(room!.question)}).<br>
They were signed by ${escapeHtml(record.signer)} on ${escapeHtml(signedAt)} UTC. The PDF is attached.</p>
<p style="color: #454e57">SHA-256 of the file: <code>${escapeHtml(record.sha256)}</code><br>
Anyone can check the signature, and whether the file matches the record kept by Counterpoise, on its “Check minutes” page.</p>
</body></html>`,
        attachments: [{ filename: record.fileName, content: record.pdf, contentType: 'application/pdf' }],
      })
      accepted++
    }
    catch (error) {
      const base = (error as { message?: string }).message ?? 'The mail server failed.'
      throw createError({ statusCode: 503, message: `${base} ${accepted} of ${recipients.length} messages had been accepted before the failure; send again to reach everyone.` })
    }
  }
  return useDb().transaction(async (tx) => {
    const [updated] = await tx.update(minutesRecords).set({ sentAt: sql`now()`, sentTo: accepted }).where(eq(minutesRecords.id, record.id)).returning(recordColumns)
    await audit({ actorId: sender.id, roomId, action: 'minutes.sent', details: { record: record.id, recipients: accepted } }, tx)
    return minutesRecordView(updated!)
  })
}
