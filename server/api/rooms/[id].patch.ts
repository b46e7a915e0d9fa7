import { eq, sql } from 'drizzle-orm'
import { CreateRoomBody, RoomParams } from '../../../shared/schemas/rooms'
import { rooms } from '../../database/schema'

const UpdateRoomBody = CreateRoomBody.partial()

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'room:manage')
  const body = await validBody(event, UpdateRoomBody)
  return useDb().transaction(async (tx) => {
    const [updated] = await tx.update(rooms).set({ ...body, updatedAt: sql`now()` }).where(eq(rooms.id, id)).returning()
    await audit({ actorId: user.id, roomId: id, action: 'room.updated', details: body }, tx)
    return updated
  })
})
