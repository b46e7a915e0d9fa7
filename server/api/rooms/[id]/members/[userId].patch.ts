import { and, eq } from 'drizzle-orm'
import { MemberParams, MemberRoleBody } from '../../../../../shared/schemas/invitations'
import { roomMembers } from '../../../../database/schema'

/** Change a member's role. The last facilitator cannot be demoted: someone must still run the room. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id, userId } = validParams(event, MemberParams)
  await requireRoomPermission(id, user.id, 'people:manage')
  const body = await validBody(event, MemberRoleBody)
  const answer = await useDb().transaction(async (tx) => {
    const members = await lockRoomMembers(tx, id)
    const target = members.find(m => m.userId === userId)
    if (!target) throw createError({ statusCode: 404, message: 'That person is not in this room.' })
    if (target.role === body.role) return { userId, role: target.role, changed: false }
    if (target.role === 'facilitator' && members.filter(m => m.role === 'facilitator').length === 1) {
      throw createError({ statusCode: 409, message: 'A room needs at least one facilitator. Make someone else facilitator first, then change this role.' })
    }
    await tx.update(roomMembers).set({ role: body.role }).where(and(eq(roomMembers.roomId, id), eq(roomMembers.userId, userId)))
    await audit({ actorId: user.id, roomId: id, action: 'member.role-changed', details: { userId, from: target.role, to: body.role } }, tx)
    return { userId, role: body.role, changed: true }
  })
  // Committed: the live sockets follow the new role (server/utils/realtime.ts).
  if (answer.changed) await membershipChanged(id, userId)
  return answer
})
