import { eq, sql } from 'drizzle-orm'
import { ChangePasswordBody } from '../../../shared/schemas/auth'
import { users } from '../../database/schema'

/**
 * Change one's own password. Every other session of the account ends (its cookie stops being
 * accepted and its sockets are disconnected); this browser gets a fresh session and stays signed in.
 * Guesses at the current password count against the same limits as sign-in.
 */
export default defineEventHandler(async (event) => {
  const { user: sessionUser, account: user } = await requireAccount(event)
  const body = await validBody(event, ChangePasswordBody)
  await assertSignInAllowed(event, sessionUser.email)
  if (!await verifyPassword(user.passwordHash, body.currentPassword)) {
    await recordSignInFailure(event, sessionUser.email)
    const message = 'The current password is not right.'
    throw createError({ statusCode: 400, message, data: { fieldErrors: { currentPassword: message } } })
  }
  await clearSignInFailures(sessionUser.email)
  const passwordHash = await hashPassword(body.newPassword)
  const updated = await useDb().transaction(async (tx) => {
    const [row] = await tx.update(users)
      .set({ passwordHash, sessionEpoch: sql`${users.sessionEpoch} + 1` })
      .where(eq(users.id, user.id))
      .returning()
    await audit({ actorId: user.id, action: 'user.password-changed' }, tx)
    return row!
  })
  await startSession(event, updated)
  // Sockets authenticated under the old epoch go; this browser's own reconnect with the new cookie.
  disconnectUser(user.id)
  return { changed: true }
})
