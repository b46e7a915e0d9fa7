export default defineEventHandler(async (event) => {
  const session = await getUserSession(event)
  await clearUserSession(event)
  if (session.user) {
    disconnectUser(session.user.id)
    await audit({ actorId: session.user.id, action: 'user.signed-out' })
  }
  return { signedOut: true }
})
