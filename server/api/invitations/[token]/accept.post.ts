import { AcceptInvitationBody } from '../../../../shared/schemas/invitations'
import { users } from '../../../database/schema'

const ACCOUNT_EXISTS = 'An account with this e-mail address already exists. Sign in first, then open the invitation link again.'

/**
 * Use an invitation link. The link is the credential: a signed-in person joins with the invited role
 * whichever account they use (the account is recorded). Without a session, the body creates an account
 * for the invited address and signs it in. The invitation row is locked (FOR UPDATE) and marked accepted
 * in the same transaction, so a link works exactly once.
 */
export default defineEventHandler(async (event) => {
  const token = invitationTokenOf(event)
  const { session, account } = await currentUserSession(event)
  if (session.user && !account) throw createError({ statusCode: 401, message: SESSION_ENDED })
  const sessionUser = account

  if (sessionUser) {
    const joined = await useDb().transaction(async (tx) => {
      const invitation = await liveInvitation(tx, token, { lock: true })
      return acceptInvitation(tx, invitation, sessionUser.id)
    })
    // After the commit: the room hears the new counts of who may weigh and vote, and the new
    // member's open pages of the room are told to join again.
    if (!joined.alreadyMember) await membershipChanged(joined.roomId, sessionUser.id)
    return joined
  }

  // A dead link answers 404 before any password is hashed or any form error is shown.
  const preview = await liveInvitation(useDb(), token)
  const body = await validBody(event, AcceptInvitationBody)
  if (await findUserByEmail(preview.email)) {
    throw createError({ statusCode: 409, message: ACCOUNT_EXISTS, data: { accountExists: true } })
  }
  const passwordHash = await hashPassword(body.password)
  const { user, joined } = await useDb().transaction(async (tx) => {
    const invitation = await liveInvitation(tx, token, { lock: true })
    const [created] = await tx.insert(users)
      .values({ email: invitation.email, displayName: body.displayName, passwordHash })
      .onConflictDoNothing()
      .returning()
    if (!created) throw createError({ statusCode: 409, message: ACCOUNT_EXISTS, data: { accountExists: true } })
    await audit({ actorId: created.id, action: 'user.signed-up', details: { email: created.email, invitationId: invitation.id } }, tx)
    const joined = await acceptInvitation(tx, invitation, created.id, { newAccount: true })
    return { user: created, joined }
  })
  await membershipChanged(joined.roomId, user.id)
  await startSession(event, user)
  setResponseStatus(event, 201)
  return { ...joined, user: sessionUserOf(user) }
})
