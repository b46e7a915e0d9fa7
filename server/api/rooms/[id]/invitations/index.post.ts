import { and, eq, sql } from 'drizzle-orm'
import { RoomParams } from '../../../../../shared/schemas/rooms'
import { InviteBody } from '../../../../../shared/schemas/invitations'
import { invitations, roomMembers, users } from '../../../../database/schema'

/**
 * Invite someone by e-mail. A pending invitation to the same address is re-sent (new link, new
 * expiry, the role now asked for) rather than duplicated. The mail is sent inside the transaction:
 * when the mail server refuses (503), no invitation is left behind claiming to have been sent.
 */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  const { room } = await requireRoomPermission(id, user.id, 'people:manage')
  const body = await validBody(event, InviteBody)
  const result = await useDb().transaction(async (tx) => {
    // Two invitations of one address at once would otherwise both find no pending row and both insert.
    await tx.execute(sql`select pg_advisory_xact_lock(hashtextextended(${`invitation:${id}:${body.email.toLowerCase()}`}, 0))`)
    const [member] = await tx.select({ name: users.displayName }).from(roomMembers)
      .innerJoin(users, eq(users.id, roomMembers.userId))
      .where(and(eq(roomMembers.roomId, id), sql`lower(${users.email}) = lower(${body.email})`))
    if (member) {
      throw createError({
        statusCode: 409,
        message: `${member.name} (${body.email}) is already in this room. Change their role in the list of members instead.`,
        data: { fieldErrors: { email: 'This person is already in the room.' } },
      })
    }
    const { token, tokenHash } = newInvitationToken()
    const expiresAt = invitationExpiry()
    const [pending] = await tx.select().from(invitations)
      .where(and(eq(invitations.roomId, id), eq(invitations.status, 'pending'), sql`lower(${invitations.email}) = lower(${body.email})`))
      .limit(1)
      .for('update')
    const [invitation] = pending
      ? await tx.update(invitations)
          .set({ tokenHash, expiresAt, role: body.role, invitedBy: user.id, lastSentAt: sql`now()`, sendCount: sql`${invitations.sendCount} + 1` })
          .where(eq(invitations.id, pending.id))
          .returning()
      : await tx.insert(invitations)
          .values({ roomId: id, email: body.email, role: body.role, tokenHash, expiresAt, invitedBy: user.id })
          .returning()
    await audit({
      actorId: user.id,
      roomId: id,
      action: pending ? 'invitation.resent' : 'invitation.created',
      details: { invitationId: invitation!.id, email: invitation!.email, role: invitation!.role, ...(pending && pending.role !== body.role ? { previousRole: pending.role } : {}) },
    }, tx)
    await sendInvitationEmail(event, { to: invitation!.email, token, room, role: invitation!.role, inviterName: user.displayName, expiresAt })
    return { invitation: invitation!, resent: !!pending }
  })
  setResponseStatus(event, result.resent ? 200 : 201)
  return { ...invitationView(result.invitation, { invitedBy: user.displayName }), resent: result.resent }
})
