/**
 * A request that fails because PostgreSQL cannot be reached (restarting, stopped, network) answers
 * 503 with a plain sentence instead of a bare 500: the app keeps running and its pool reconnects by
 * itself once the database is back (tests/server/dbRestart.test.ts).
 *
 * Nitro calls the 'error' hooks synchronously, before its error handler renders the response, so
 * the H3Error can be rewritten here; the test above fails if that ever stops being so.
 */
import type { H3Error } from 'h3'

export default defineNitroPlugin((nitroApp) => {
  nitroApp.hooks.hook('error', (error) => {
    const h3Error = error as H3Error
    if ((h3Error.statusCode ?? 500) < 500 || !isDatabaseUnreachable(error)) return
    console.error('[db] request failed, the database is not reachable:', (error as Error).message)
    h3Error.statusCode = 503
    h3Error.statusMessage = 'Service Unavailable'
    h3Error.message = DATABASE_UNREACHABLE_MESSAGE
    h3Error.unhandled = false
  })
})
