import { VoteParams } from '../../../../../../shared/schemas/resolution'

/** Close the final vote (facilitators); ballots are refused from then on. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id, voteId } = validParams(event, VoteParams)
  await requireRoomPermission(id, user.id, 'weighing:run')
  const vote = await closeVote(id, voteId, user.id)
  await broadcastVoteState(id)
  return voteView(id, vote.id, { withBallots: true })
})
