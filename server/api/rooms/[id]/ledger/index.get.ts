import { RoomParams } from '../../../../../shared/schemas/rooms'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'room:view')
  // ?version=N reads an older version (a weighing uses the version it was opened on).
  return ledgerView(await ledgerVersionFromQuery(event, id))
})
