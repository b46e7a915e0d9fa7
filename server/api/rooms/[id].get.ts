import { asc, eq } from 'drizzle-orm'
import { RoomParams } from '../../../shared/schemas/rooms'
import { roomMembers, users } from '../../database/schema'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  const { room, role } = await requireRoomPermission(id, user.id, 'room:view')
  const members = await useDb()
    .select({ userId: users.id, displayName: users.displayName, role: roomMembers.role })
    .from(roomMembers)
    .innerJoin(users, eq(users.id, roomMembers.userId))
    .where(eq(roomMembers.roomId, id))
    .orderBy(asc(roomMembers.role), asc(users.displayName))
  return { ...room, role, members }
})
