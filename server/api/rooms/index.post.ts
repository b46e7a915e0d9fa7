import { CreateRoomBody } from '../../../shared/schemas/rooms'
import { roomMembers, rooms } from '../../database/schema'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const body = await validBody(event, CreateRoomBody)
  const room = await useDb().transaction(async (tx) => {
    // A clash of random codes is rare; retry with a fresh one rather than fail the request.
    let created: typeof rooms.$inferSelect | undefined
    for (let attempt = 0; !created && attempt < 5; attempt++) {
      [created] = await tx.insert(rooms).values({ ...body, code: newRoomCode(), createdBy: user.id }).onConflictDoNothing({ target: rooms.code }).returning()
    }
    if (!created) throw createError({ statusCode: 503, message: 'Could not find a free room code; try again.' })
    await tx.insert(roomMembers).values({ roomId: created!.id, userId: user.id, role: 'facilitator' })
    await audit({ actorId: user.id, roomId: created!.id, action: 'room.created', details: { title: created!.title } }, tx)
    return created!
  })
  setResponseStatus(event, 201)
  return { ...room, role: 'facilitator' as const }
})
