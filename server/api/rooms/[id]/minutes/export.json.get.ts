import { RoomParams } from '../../../../../shared/schemas/rooms'
import type { DecisionRecordExport } from '../../../../../shared/types/decisionRecord'

/**
 * The full decision record for the archive, as JSON (shared/types/decisionRecord.ts): the minutes'
 * content (what the preview shows and the PDF prints), every resolution with its full text and
 * amendment chain, every vote with its tally, every audit entry, and the signed minutes held for
 * the room with their SHA-256. Facilitators and secretaries.
 */
export default defineEventHandler(async (event): Promise<DecisionRecordExport> => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  const { room } = await requireRoomPermission(id, user.id, 'minutes:view')
  const record = await decisionRecord(id)
  setResponseHeaders(event, {
    'content-type': 'application/json; charset=utf-8',
    'content-disposition': `attachment; filename="${exportFileName(room.title, record.minutes.ledger.version)}-record.json"`,
  })
  return record
})
