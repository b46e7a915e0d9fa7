import { and, eq } from 'drizzle-orm'
import type { H3Event } from 'h3'
import { roomMembers, rooms } from '../database/schema'
import { roleAllows, type RoomAction, type RoomRole } from '../../shared/roles'

/**
 * The account behind the request's session, read from the database, or 401: signed out, or a
 * session ended by a password change elsewhere.
 */
export async function requireAccount(event: H3Event) {
  const { session, account } = await currentUserSession(event)
  if (!session.user) throw createError({ statusCode: 401, message: 'Unauthorized' })
  if (!account) throw createError({ statusCode: 401, message: SESSION_ENDED })
  return { user: session.user, account }
}

/** The signed-in user, or 401 (also for a session ended by a password change elsewhere). */
export async function requireUser(event: H3Event) {
  return (await requireAccount(event)).user
}

/** The signed-in site administrator, or 401/403. */
export async function requireAdmin(event: H3Event) {
  // The session may predate a role change: the role comes from the database, not the cookie.
  const { user, account } = await requireAccount(event)
  if (account.siteRole !== 'admin') throw createError({ statusCode: 403, message: 'Only a site administrator can do this.' })
  return user
}

/**
 * The room and the caller's role in it. A room the caller is not a member of answers 404,
 * exactly like a room that does not exist, so room ids cannot be probed.
 */
export async function requireRoomMember(roomId: string, userId: string) {
  const [row] = await useDb()
    .select({ room: rooms, role: roomMembers.role })
    .from(rooms)
    .innerJoin(roomMembers, and(eq(roomMembers.roomId, rooms.id), eq(roomMembers.userId, userId)))
    .where(eq(rooms.id, roomId))
  if (!row) throw createError({ statusCode: 404, message: 'No such room, or you are not a member of it.' })
  return row
}

/** Membership plus permission: 404 for outsiders, 403 for members whose role does not allow the action. */
export async function requireRoomPermission(roomId: string, userId: string, action: RoomAction) {
  const member = await requireRoomMember(roomId, userId)
  if (!roleAllows(member.role, action)) {
    throw createError({ statusCode: 403, message: `Your role in this room (${member.role}) does not allow this.` })
  }
  return member
}

/** Membership with one of the given roles: 404 for outsiders, 403 for other roles. */
export async function requireRoomRole(roomId: string, userId: string, ...allowed: RoomRole[]) {
  const member = await requireRoomMember(roomId, userId)
  if (!allowed.includes(member.role)) {
    throw createError({ statusCode: 403, message: `This needs the ${allowed.join(' or ')} role in this room.` })
  }
  return member
}
