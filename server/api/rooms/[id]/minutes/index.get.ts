import { RoomParams } from '../../../../../shared/schemas/rooms'
import type { MinutesContent } from '../../../../../shared/types/minutes'

/** The minutes as they stand (the preview): the newest resolution, or the current ledger before one is recorded. */
export default defineEventHandler(async (event): Promise<MinutesContent> => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'minutes:view')
  return minutesContent(id)
})
