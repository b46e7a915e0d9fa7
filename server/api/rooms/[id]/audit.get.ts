import { desc, eq } from 'drizzle-orm'
import { RoomParams } from '../../../../shared/schemas/rooms'
import { auditLog, users } from '../../../database/schema'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'minutes:view')
  return useDb()
    .select({ id: auditLog.id, at: auditLog.at, action: auditLog.action, actor: users.displayName, details: auditLog.details })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.actorId))
    .where(eq(auditLog.roomId, id))
    .orderBy(desc(auditLog.id))
    .limit(500)
})
