import { desc, eq, sql } from 'drizzle-orm'
import { auditLog, roomMembers, rooms } from '../../database/schema'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const lastActivity = sql<Date>`coalesce((select max(${auditLog.at}) from ${auditLog} where ${auditLog.roomId} = ${rooms.id}), ${rooms.updatedAt})`.mapWith(rooms.updatedAt)
  return useDb()
    .select({
      id: rooms.id,
      title: rooms.title,
      question: rooms.question,
      status: rooms.status,
      role: roomMembers.role,
      lastActivity: lastActivity.as('last_activity'),
    })
    .from(roomMembers)
    .innerJoin(rooms, eq(rooms.id, roomMembers.roomId))
    .where(eq(roomMembers.userId, user.id))
    .orderBy(desc(sql`last_activity`))
})
