import { RoomParams } from '../../../../../../shared/schemas/rooms'

/** The room's signed minutes, newest first, with their SHA-256 and e-mail bookkeeping. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'minutes:view')
  return listMinutesRecords(id)
})
