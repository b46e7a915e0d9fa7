import { RoomParams } from '../../../../../shared/schemas/rooms'
import type { MinutesContent } from '../../../../../shared/types/minutes'

/**
 * The decision record for the archive, as JSON: the minutes' content (what the preview shows and
 * the PDF prints) and the signed minutes held for the room with their SHA-256.
 */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  const { room } = await requireRoomPermission(id, user.id, 'minutes:view')
  const minutes: MinutesContent = await minutesContent(id)
  const signed = await listMinutesRecords(id)
  setResponseHeaders(event, {
    'content-type': 'application/json; charset=utf-8',
    'content-disposition': `attachment; filename="${exportFileName(room.title, minutes.ledger.version)}-record.json"`,
  })
  return {
    format: 'counterpoise-decision-record',
    formatVersion: 1,
    exportedAt: new Date().toISOString(),
    minutes,
    signedMinutes: signed.map(r => ({ sha256: r.sha256, signer: r.signer, signedAt: r.signedAt, fileName: r.fileName, resolutionId: r.resolutionId })),
  }
})
