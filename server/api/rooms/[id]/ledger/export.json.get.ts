import { RoomParams } from '../../../../../shared/schemas/rooms'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  const { room } = await requireRoomPermission(id, user.id, 'room:view')
  const view = ledgerView(await ledgerVersionFromQuery(event, id))
  if (!view.version) throw createError({ statusCode: 404, message: 'This room has no ledger yet.' })
  setResponseHeaders(event, {
    'content-type': 'application/json; charset=utf-8',
    'content-disposition': `attachment; filename="${exportFileName(room.title, view.version.number)}.json"`,
  })
  return { format: 'counterpoise-ledger', formatVersion: 1, room: { id: room.id, title: room.title, question: room.question }, ...view }
})
