import { RoomParams } from '../../../../../shared/schemas/rooms'

/** The room's resolutions, newest first (amendments included), and the current one. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'room:view')
  const resolutions = await listResolutions(id)
  return { current: resolutions[0] ?? null, resolutions }
})
