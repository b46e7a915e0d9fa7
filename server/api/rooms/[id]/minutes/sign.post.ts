import { RoomParams } from '../../../../../shared/schemas/rooms'

/**
 * The secretary signs the minutes of the newest resolution: rendered, signed with the server's key
 * in the secretary's name, stored with its SHA-256, and the resolution frozen (one transaction).
 * 409 when no resolution is recorded or it is already signed; 503 when no signing key is configured.
 */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'minutes:sign')
  // The name as it is now, not as the session cookie remembers it.
  const current = await findUserById(user.id)
  const record = await signMinutes(id, { id: user.id, displayName: current?.displayName ?? user.displayName })
  setResponseStatus(event, 201)
  return record
})
