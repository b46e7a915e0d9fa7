import type { H3Event } from 'h3'
import type { UserSession } from '#auth-utils'
import type { User } from '../database/schema'

/**
 * Sessions are sealed cookies, so the server cannot delete one held by another device. Each
 * session carries the account's session epoch from when it was made; changing the password
 * bumps the epoch, and every check below turns an older session away.
 */
export function sessionIsCurrent(session: Pick<UserSession, 'user' | 'epoch'>, user: Pick<User, 'id' | 'sessionEpoch'> | undefined) {
  return !!session.user && !!user && user.id === session.user.id && (session.epoch ?? 0) === user.sessionEpoch
}

/** The account behind the session, or null when there is none or the session has been ended elsewhere. */
export async function currentSessionAccount(session: UserSession) {
  if (!session.user) return null
  const user = await findUserById(session.user.id)
  return sessionIsCurrent(session, user) ? user! : null
}

/** The request's session if it is still current; an ended one is cleared from this browser. */
export async function currentUserSession(event: H3Event) {
  const session = await getUserSession(event)
  if (!session.user) return { session, account: null }
  const account = await currentSessionAccount(session)
  if (!account) await clearUserSession(event)
  return { session, account }
}

export const SESSION_ENDED = 'Your session has ended (the password was changed, or the account is gone). Sign in again.'
