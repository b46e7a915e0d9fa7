import { and, eq, gt, isNull, sql } from 'drizzle-orm'
import { JoinRoomBody } from '../../shared/schemas/invitations'
import { auditLog, roomMembers, rooms } from '../database/schema'

const WINDOW_MINUTES = 15
const FAILED_JOIN = 'room.join-code-failed'
const failedJoinLimit = () => Number(process.env.COUNTERPOISE_JOIN_LIMIT || 10)

/**
 * Join a room as observer with its short code. Someone already in the room keeps their role.
 * Room codes are short, so wrong guesses are counted (in the audit log, per account, across
 * processes) and more than COUNTERPOISE_JOIN_LIMIT (10) in 15 minutes answers 429.
 */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { code } = await validBody(event, JoinRoomBody)
  const [recent] = await useDb()
    .select({ failures: sql<number>`count(*)`.mapWith(Number) })
    .from(auditLog)
    .where(and(
      eq(auditLog.actorId, user.id),
      eq(auditLog.action, FAILED_JOIN),
      isNull(auditLog.roomId),
      gt(auditLog.at, sql`now() - make_interval(mins => ${WINDOW_MINUTES})`),
    ))
  if ((recent?.failures ?? 0) >= failedJoinLimit()) {
    setResponseHeader(event, 'Retry-After', WINDOW_MINUTES * 60)
    throw createError({ statusCode: 429, message: `Too many room codes that did not match. Wait ${WINDOW_MINUTES} minutes, then check the code on the screen and try again.` })
  }
  const [room] = await useDb().select({ id: rooms.id, title: rooms.title }).from(rooms).where(eq(rooms.code, code))
  if (!room) {
    // Written on purpose although the request fails: it is what the limit above counts.
    await audit({ actorId: user.id, action: FAILED_JOIN, details: { code } })
    throw createError({ statusCode: 404, message: `No room has the code ${code}. Check it on the screen and try again.` })
  }
  const result = await useDb().transaction(async (tx) => {
    const [added] = await tx.insert(roomMembers).values({ roomId: room.id, userId: user.id, role: 'observer' }).onConflictDoNothing().returning()
    if (added) {
      await audit({ actorId: user.id, roomId: room.id, action: 'room.joined-by-code', details: { role: 'observer' } }, tx)
      return { roomId: room.id, title: room.title, role: added.role, alreadyMember: false }
    }
    const [existing] = await tx.select({ role: roomMembers.role }).from(roomMembers).where(and(eq(roomMembers.roomId, room.id), eq(roomMembers.userId, user.id)))
    return { roomId: room.id, title: room.title, role: existing!.role, alreadyMember: true }
  })
  setResponseStatus(event, result.alreadyMember ? 200 : 201)
  return result
})
