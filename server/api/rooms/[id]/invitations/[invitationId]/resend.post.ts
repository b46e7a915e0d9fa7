import { and, eq, sql } from 'drizzle-orm'
import { InvitationParams } from '../../../../../../shared/schemas/invitations'
import { invitations } from '../../../../../database/schema'

/** A new link for a pending (or expired) invitation: the old link stops working, the expiry starts again. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id, invitationId } = validParams(event, InvitationParams)
  const { room } = await requireRoomPermission(id, user.id, 'people:manage')
  return useDb().transaction(async (tx) => {
    const [current] = await tx.select().from(invitations)
      .where(and(eq(invitations.id, invitationId), eq(invitations.roomId, id)))
      .for('update')
    if (!current) throw createError({ statusCode: 404, message: 'There is no such invitation in this room.' })
    if (current.status === 'accepted') throw createError({ statusCode: 409, message: `${current.email} has already joined this room; there is nothing to re-send.` })
    if (current.status === 'revoked') throw createError({ statusCode: 409, message: `The invitation to ${current.email} was withdrawn. Invite them again instead.` })
    const { token, tokenHash } = newInvitationToken()
    const expiresAt = invitationExpiry()
    const [updated] = await tx.update(invitations)
      .set({ tokenHash, expiresAt, invitedBy: user.id, lastSentAt: sql`now()`, sendCount: sql`${invitations.sendCount} + 1` })
      .where(eq(invitations.id, invitationId))
      .returning()
    await audit({ actorId: user.id, roomId: id, action: 'invitation.resent', details: { invitationId, email: current.email, role: current.role, sendCount: updated!.sendCount } }, tx)
    await sendInvitationEmail(event, { to: current.email, token, room, role: current.role, inviterName: user.displayName, expiresAt })
    return invitationView(updated!, { invitedBy: user.displayName })
  })
})
