import { eq, sql } from 'drizzle-orm'
import type { H3Event } from 'h3'
import { users, type User } from '../database/schema'

export function findUserByEmail(email: string) {
  return useDb().query.users.findFirst({ where: sql`lower(${users.email}) = lower(${email})` })
}

export function findUserById(id: string) {
  return useDb().query.users.findFirst({ where: eq(users.id, id) })
}

/** What the session carries: never the password hash. */
export function sessionUserOf(user: User) {
  return { id: user.id, email: user.email, displayName: user.displayName, siteRole: user.siteRole }
}

export async function startSession(event: H3Event, user: User) {
  await replaceUserSession(event, { user: sessionUserOf(user), epoch: user.sessionEpoch, loggedInAt: Date.now() })
}
