import { WeighingParams } from '../../../../../../shared/schemas/weighing'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id, weighingId } = validParams(event, WeighingParams)
  await requireRoomPermission(id, user.id, 'weighing:run')
  const weighing = await closeWeighing(id, weighingId, user.id)
  await broadcastRoomState(id)
  return weighing
})
