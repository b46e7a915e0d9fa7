import { RoomParams } from '../../../../../shared/schemas/rooms'
import { OpenWeighingBody } from '../../../../../shared/schemas/weighing'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'weighing:run')
  const body = await validBody(event, OpenWeighingBody)
  const weighing = await openWeighing(id, user.id, body)
  await broadcastRoomState(id)
  setResponseStatus(event, 201)
  return weighing
})
