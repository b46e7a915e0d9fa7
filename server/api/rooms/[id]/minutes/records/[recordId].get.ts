import { MinutesRecordFileParams } from '../../../../../../shared/schemas/minutes'

/** GET …/records/<record id>.pdf: the signed file exactly as stored. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id, recordId } = validParams(event, MinutesRecordFileParams)
  await requireRoomPermission(id, user.id, 'minutes:view')
  const record = await minutesRecordFile(id, recordId)
  setResponseHeaders(event, {
    'content-type': 'application/pdf',
    'content-disposition': `attachment; filename="${record.fileName}"`,
    'content-length': record.pdf.length,
  })
  return record.pdf
})
