/**
 * An error thrown with only a status code and a message (`createError({ statusCode: 404, message })`)
 * would otherwise answer with h3's default status text, "Server Error", even for a 404 or a 409:
 * misleading to anyone reading the API. Fill in the standard reason phrase for the code (Node's own
 * `http.STATUS_CODES`) wherever a route did not set one. Nitro calls the 'error' hooks before its
 * error handler renders the answer (see databaseUnreachable.ts; tests/server/security.test.ts fails
 * if that stops being so).
 */
import { STATUS_CODES } from 'node:http'
import type { H3Error } from 'h3'

export default defineNitroPlugin((nitroApp) => {
  nitroApp.hooks.hook('error', (error) => {
    const h3Error = error as H3Error
    const code = h3Error.statusCode
    if (typeof code !== 'number' || code < 400 || code >= 500) return
    if (h3Error.statusMessage && h3Error.statusMessage !== 'Server Error') return
    const reason = STATUS_CODES[code]
    if (reason) h3Error.statusMessage = reason
  })
})
