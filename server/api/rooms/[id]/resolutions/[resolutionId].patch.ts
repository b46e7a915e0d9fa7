import { EditResolutionBody, ResolutionParams } from '../../../../../shared/schemas/resolution'

/** Correct a resolution before its minutes are signed (facilitators); a frozen one answers 409. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id, resolutionId } = validParams(event, ResolutionParams)
  await requireRoomPermission(id, user.id, 'resolution:record')
  const body = await validBody(event, EditResolutionBody)
  const resolution = await editResolution(id, resolutionId, user.id, body)
  announceResolutionChange(id)
  return resolution
})
