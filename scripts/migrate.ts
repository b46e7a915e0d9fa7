/**
 * Apply the SQL migrations in drizzle/ under a PostgreSQL advisory lock, so two processes
 * starting at once cannot both migrate (Drizzle takes no lock of its own).
 * Runs before the server starts: Nitro does not wait for async plugins.
 */
import { fileURLToPath } from 'node:url'
import { drizzle } from 'drizzle-orm/node-postgres'
import { migrate } from 'drizzle-orm/node-postgres/migrator'
import pg from 'pg'

const MIGRATION_LOCK = 727_001 // arbitrary, ours

export async function migrateDatabase(url: string) {
  const client = new pg.Client({ connectionString: url })
  await client.connect()
  try {
    await client.query('SELECT pg_advisory_lock($1)', [MIGRATION_LOCK])
    await migrate(drizzle(client), { migrationsFolder: fileURLToPath(new URL('../drizzle', import.meta.url)) })
  }
  finally {
    await client.query('SELECT pg_advisory_unlock($1)', [MIGRATION_LOCK]).catch(() => {})
    await client.end()
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const url = process.env.DATABASE_URL
  if (!url) {
    console.error('DATABASE_URL is not set (npm start and npm test set it for you).')
    process.exit(2)
  }
  await migrateDatabase(url)
  console.log('[counterpoise] database migrated')
}
