import { RoomParams } from '../../../../../shared/schemas/rooms'
import { OpenVoteBody } from '../../../../../shared/schemas/resolution'

/** Open the final vote (facilitators): the shortlist, or else the efficient alternatives of the current ledger version. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'weighing:run')
  const body = await validBody(event, OpenVoteBody)
  const vote = await openVote(id, user.id, body)
  await broadcastVoteState(id)
  setResponseStatus(event, 201)
  return vote
})
