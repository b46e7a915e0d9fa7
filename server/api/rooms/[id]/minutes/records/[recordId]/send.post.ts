import { MinutesRecordParams } from '../../../../../../../shared/schemas/minutes'

/** The secretary e-mails signed minutes, attached, to every member of the room. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id, recordId } = validParams(event, MinutesRecordParams)
  await requireRoomPermission(id, user.id, 'minutes:sign')
  const current = await findUserById(user.id)
  return sendMinutesRecord(id, recordId, { id: user.id, displayName: current?.displayName ?? user.displayName })
})
