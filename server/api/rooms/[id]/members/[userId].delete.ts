import { and, eq } from 'drizzle-orm'
import { MemberParams } from '../../../../../shared/schemas/invitations'
import { roomMembers } from '../../../../database/schema'

/** Take someone out of the room. The last facilitator cannot be removed. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id, userId } = validParams(event, MemberParams)
  await requireRoomPermission(id, user.id, 'people:manage')
  const answer = await useDb().transaction(async (tx) => {
    const members = await lockRoomMembers(tx, id)
    const target = members.find(m => m.userId === userId)
    if (!target) throw createError({ statusCode: 404, message: 'That person is not in this room.' })
    if (target.role === 'facilitator' && members.filter(m => m.role === 'facilitator').length === 1) {
      throw createError({ statusCode: 409, message: 'A room needs at least one facilitator. Make someone else facilitator first, then remove this person.' })
    }
    await tx.delete(roomMembers).where(and(eq(roomMembers.roomId, id), eq(roomMembers.userId, userId)))
    await audit({ actorId: user.id, roomId: id, action: 'member.removed', details: { userId, role: target.role } }, tx)
    return { userId, removed: true }
  })
  // Committed: the removed member's live sockets stop hearing the room (server/utils/realtime.ts).
  await membershipChanged(id, userId)
  return answer
})
