import { sql } from 'drizzle-orm'

/** Liveness and database reachability, for scripts and load balancers. */
export default defineEventHandler(async (event) => {
  try {
    await useDb().execute(sql`select 1`)
    return { status: 'ok' }
  }
  catch {
    setResponseStatus(event, 503)
    return { status: 'database-unavailable' }
  }
})
