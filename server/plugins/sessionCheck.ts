/**
 * The browser asks `/api/_auth/session` who is signed in. A session ended by a password change on
 * another device is cleared there, so the page shows the visitor as signed out instead of failing
 * on every request. When the database cannot be reached the answer is left alone: the requests
 * themselves then fail cleanly with 503 (server/plugins/databaseUnreachable.ts).
 */
export default defineNitroPlugin(() => {
  sessionHooks.hook('fetch', async (session, event) => {
    let account
    try {
      account = await currentSessionAccount(session)
    }
    catch (error) {
      if (isDatabaseUnreachable(error)) return
      throw error
    }
    if (account) return
    await clearUserSession(event)
    throw createError({ statusCode: 401, message: SESSION_ENDED })
  })
})
