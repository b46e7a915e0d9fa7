/** Direct database access for test set-up and for checking what was (not) written. */
import pg from 'pg'

let pool: pg.Pool | undefined

export function testDb() {
  if (!process.env.DATABASE_URL) throw new Error('DATABASE_URL is not set')
  pool ??= new pg.Pool({ connectionString: process.env.DATABASE_URL, max: 2 })
  return pool
}

export async function closeTestDb() {
  await pool?.end()
  pool = undefined
}

export async function count(table: string, where = 'true', params: unknown[] = []) {
  const { rows } = await testDb().query(`select count(*)::int as n from ${table} where ${where}`, params)
  return rows[0].n as number
}
