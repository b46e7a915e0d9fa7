import { eq } from 'drizzle-orm'
import { rooms } from '../../../database/schema'

/**
 * Public: what an invitation link is for, so its page can say so before anyone signs in. Every link
 * that does not work (unknown, used, withdrawn, replaced, expired) gets the same 404.
 */
export default defineEventHandler(async (event) => {
  const token = invitationTokenOf(event)
  const invitation = await liveInvitation(useDb(), token)
  const [room] = await useDb().select({ title: rooms.title, question: rooms.question }).from(rooms).where(eq(rooms.id, invitation.roomId))
  const inviter = invitation.invitedBy ? await findUserById(invitation.invitedBy) : undefined
  // The holder of the link may learn whether the invited address has an account: the page then
  // offers "sign in" rather than "create an account". Nobody else can ask.
  const account = await findUserByEmail(invitation.email)
  setResponseHeader(event, 'Cache-Control', 'no-store')
  setResponseHeader(event, 'Referrer-Policy', 'no-referrer')
  return {
    roomTitle: room!.title,
    roomQuestion: room!.question,
    role: invitation.role,
    invitedBy: inviter?.displayName ?? null,
    email: maskEmailAddress(invitation.email),
    state: invitationStateOf(invitation),
    expiresAt: invitation.expiresAt,
    accountExists: !!account,
  }
})
