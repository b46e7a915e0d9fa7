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
    // A database that stops answering gives an error after 10 s instead of a request that waits for ever.
    pool = new pg.Pool({ connectionString: databaseUrl(), max: Number(process.env.DATABASE_POOL_SIZE || 10), connectionTimeoutMillis: 10_000 })
    // A dropped idle connection (database restart) must not take the process down.
    pool.on('error', error => console.error('[db] idle client error:', error.message))
    // …nor one lost while checked out between two queries (the query in hand fails on its own).
    pool.on('connect', client => client.on('error', error => console.error('[db] client error:', error.message)))
    database = drizzle(pool, { schema })
  }
  return database
}

/** What a person is told while the database cannot be reached (HTTP 503, socket failures). */
export const DATABASE_UNREACHABLE_MESSAGE = 'The database is not reachable; try again shortly.'

/** Network errors and PostgreSQL's connection and shutdown codes: a database restart or outage, not a bug. */
const UNREACHABLE_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'EPIPE', 'ETIMEDOUT', 'EHOSTUNREACH', 'ENETUNREACH', 'ENOTFOUND', 'EAI_AGAIN', '57P01', '57P02', '57P03'])
const UNREACHABLE_MESSAGES = /Connection terminated|timeout exceeded when trying to connect|Client has encountered a connection error|the database system is (starting up|shutting down)|terminating connection due to administrator command/i

/** Whether an error (or anything in its `cause` chain, e.g. Drizzle's DrizzleQueryError) means the database could not be reached. */
export function isDatabaseUnreachable(error: unknown): boolean {
  for (let e = error as { code?: unknown, message?: unknown, cause?: unknown, errors?: unknown } | undefined, depth = 0; e && depth < 8; e = e.cause as typeof e, depth++) {
    if (typeof e.code === 'string' && (UNREACHABLE_CODES.has(e.code) || e.code.startsWith('08'))) return true
    if (typeof e.message === 'string' && UNREACHABLE_MESSAGES.test(e.message)) return true
    // node's AggregateError (a refused connection on both ::1 and 127.0.0.1)
    if (Array.isArray(e.errors) && e.errors.some(inner => isDatabaseUnreachable(inner))) return true
  }
  return false
}

export type Db = ReturnType<typeof useDb>
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0]

export async function closeDb() {
  await pool?.end()
  pool = undefined
  database = undefined
}

export { schema }
