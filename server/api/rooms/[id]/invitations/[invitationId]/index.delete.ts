import { and, eq } from 'drizzle-orm'
import { InvitationParams } from '../../../../../../shared/schemas/invitations'
import { invitations } from '../../../../../database/schema'

/** Withdraw an invitation: its link stops working at once. Withdrawing twice changes nothing. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id, invitationId } = validParams(event, InvitationParams)
  await requireRoomPermission(id, user.id, 'people:manage')
  return useDb().transaction(async (tx) => {
    const [current] = await tx.select().from(invitations)
      .where(and(eq(invitations.id, invitationId), eq(invitations.roomId, id)))
      .for('update')
    if (!current) throw createError({ statusCode: 404, message: 'There is no such invitation in this room.' })
    if (current.status === 'accepted') {
      throw createError({ statusCode: 409, message: `${current.email} has already joined. To take them out of the room, remove them from the list of members.` })
    }
    if (current.status === 'revoked') return invitationView(current)
    const [revoked] = await tx.update(invitations).set({ status: 'revoked' }).where(eq(invitations.id, invitationId)).returning()
    await audit({ actorId: user.id, roomId: id, action: 'invitation.revoked', details: { invitationId, email: current.email, role: current.role } }, tx)
    return invitationView(revoked!)
  })
})
