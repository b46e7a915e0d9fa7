import { SignInBody } from '../../../shared/schemas/auth'

// Verified against when the address is unknown, so both failures take the same time.
let decoyHash: Promise<string> | undefined

export default defineEventHandler(async (event) => {
  const body = await validBody(event, SignInBody)
  await assertSignInAllowed(event, body.email)
  const user = await findUserByEmail(body.email)
  decoyHash ??= hashPassword('not-a-real-password-just-a-decoy')
  const valid = await verifyPassword(user?.passwordHash ?? await decoyHash, body.password)
  if (!user || !valid) {
    await recordSignInFailure(event, body.email)
    throw createError({ statusCode: 401, message: 'Wrong e-mail address or password.' })
  }
  await clearSignInFailures(body.email)
  await startSession(event, user)
  await audit({ actorId: user.id, action: 'user.signed-in' })
  return sessionUserOf(user)
})
