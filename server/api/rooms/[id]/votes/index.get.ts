import { RoomParams } from '../../../../../shared/schemas/rooms'
import { roleAllows } from '../../../../../shared/roles'

/**
 * The room's votes: the current one (open, or else the latest) with its tally, every vote newest
 * first, and the caller's own ballot in the current one. Who chose what goes to facilitators
 * only, and only when the room shows names (see server/utils/votes.ts).
 */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  const { role } = await requireRoomPermission(id, user.id, 'room:view')
  const withBallots = roleAllows(role, 'weighing:run')
  const votes = await listVotes(id, { withBallots })
  const current = votes.find(v => v.status === 'open') ?? votes[0] ?? null
  return {
    current,
    votes,
    mine: roleAllows(role, 'vote:cast') ? await myBallot(id, user.id) : null,
  }
})
