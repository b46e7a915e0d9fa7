import { drizzle } from 'drizzle-orm/node-postgres'
import pg from 'pg'
import * as schema from '../database/schema'

let pool: pg.Pool | undefined
let database: ReturnType<typeof drizzle<typeof schema>> | undefined

function databaseUrl() {
  const url = process.env.DATABASE_URL || useRuntimeConfig().databaseUrl
  if (!url) throw createError({ statusCode: 503, message: 'The database is not configured (DATABASE_URL).' })
  return url
}

/** The app's Drizzle client over one connection pool per process. */
export function useDb() {
  if (!database) {
    pool = new pg.Pool({ connectionString: databaseUrl(), max: Number(process.env.DATABASE_POOL_SIZE || 10) })
    // A dropped idle connection (database restart) must not take the process down.
    pool.on('error', error => console.error('[db] idle client error:', error.message))
    database = drizzle(pool, { schema })
  }
  return database
}

export type Db = ReturnType<typeof useDb>
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0]

export async function closeDb() {
  await pool?.end()
  pool = undefined
  database = undefined
}

export { schema }
