import { desc, eq } from 'drizzle-orm'
import { alias } from 'drizzle-orm/pg-core'
import { RoomParams } from '../../../../../shared/schemas/rooms'
import { invitations, users } from '../../../../database/schema'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'people:manage')
  const inviter = alias(users, 'inviter')
  const acceptor = alias(users, 'acceptor')
  const rows = await useDb()
    .select({ invitation: invitations, invitedBy: inviter.displayName, acceptedBy: acceptor.displayName })
    .from(invitations)
    .leftJoin(inviter, eq(inviter.id, invitations.invitedBy))
    .leftJoin(acceptor, eq(acceptor.id, invitations.acceptedBy))
    .where(eq(invitations.roomId, id))
    .orderBy(desc(invitations.lastSentAt))
  return rows.map(r => invitationView(r.invitation, r))
})
