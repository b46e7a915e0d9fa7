import { CreateRoomBody } from '../../../shared/schemas/rooms'
import { roomMembers, rooms } from '../../database/schema'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const body = await validBody(event, CreateRoomBody)
  const room = await useDb().transaction(async (tx) => {
    const [created] = await tx.insert(rooms).values({ ...body, createdBy: user.id }).returning()
    await tx.insert(roomMembers).values({ roomId: created!.id, userId: user.id, role: 'facilitator' })
    await audit({ actorId: user.id, roomId: created!.id, action: 'room.created', details: { title: created!.title } }, tx)
    return created!
  })
  setResponseStatus(event, 201)
  return { ...room, role: 'facilitator' as const }
})
