import { RoomParams } from '../../../../../shared/schemas/rooms'

/** The minutes as an unsigned PDF marked as a draft, for checking before signing. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'minutes:view')
  const content = await minutesContent(id)
  const pdf = await renderMinutesPdf(content, { draft: true })
  setResponseHeaders(event, {
    'content-type': 'application/pdf',
    'content-disposition': `inline; filename="${minutesFileName(content.room.title, new Date(content.preparedAt), true)}"`,
    'cache-control': 'no-store',
  })
  return pdf
})
