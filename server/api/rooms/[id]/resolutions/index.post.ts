import { RoomParams } from '../../../../../shared/schemas/rooms'
import { RecordResolutionBody } from '../../../../../shared/schemas/resolution'

/** Record the decision (facilitators), or with `amends` an amendment of the signed one. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'resolution:record')
  const body = await validBody(event, RecordResolutionBody)
  const resolution = await recordResolution(id, user.id, body)
  announceResolutionChange(id)
  setResponseStatus(event, 201)
  return resolution
})
