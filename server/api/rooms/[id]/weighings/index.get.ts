import { RoomParams } from '../../../../../shared/schemas/rooms'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'room:view')
  return listWeighings(id)
})
