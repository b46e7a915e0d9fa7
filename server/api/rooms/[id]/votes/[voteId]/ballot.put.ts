import { CastBallotHttpBody, VoteParams } from '../../../../../../shared/schemas/resolution'

/**
 * Cast (or change) the caller's ballot over HTTP, for a phone whose socket cannot connect. The
 * same rules as the socket's 'ballot:cast': stakeholders only, every alternative on the ballot,
 * the same key again changes nothing, refused once the vote is closed. Answers after the commit.
 */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id, voteId } = validParams(event, VoteParams)
  await requireRoomPermission(id, user.id, 'vote:cast')
  const body = await validBody(event, CastBallotHttpBody)
  const { ballot, changed } = await castBallot(user.id, { ...body, roomId: id, voteId })
  if (changed) await broadcastVoteState(id)
  return ballot
})
