import { SignUpBody } from '../../../shared/schemas/auth'
import { users } from '../../database/schema'

export default defineEventHandler(async (event) => {
  const body = await validBody(event, SignUpBody)
  if (await findUserByEmail(body.email)) {
    throw createError({ statusCode: 409, message: 'An account with this e-mail address already exists. Sign in instead.', data: { fieldErrors: { email: 'An account with this e-mail address already exists.' } } })
  }
  const passwordHash = await hashPassword(body.password)
  const user = await useDb().transaction(async (tx) => {
    const [created] = await tx.insert(users).values({ email: body.email, displayName: body.displayName, passwordHash }).onConflictDoNothing().returning()
    // Two sign-ups racing for the same address: the unique index decides, the loser gets 409.
    if (!created) throw createError({ statusCode: 409, message: 'An account with this e-mail address already exists. Sign in instead.' })
    await audit({ actorId: created.id, action: 'user.signed-up', details: { email: created.email } }, tx)
    return created
  })
  await startSession(event, user)
  setResponseStatus(event, 201)
  return sessionUserOf(user)
})
