import { WeighingParams } from '../../../../../../shared/schemas/weighing'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id, weighingId } = validParams(event, WeighingParams)
  await requireRoomPermission(id, user.id, 'room:view')
  return weighingResults(id, weighingId)
})
