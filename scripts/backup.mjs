#!/usr/bin/env node
// `npm run backup [-- <file>]`: dump the app's database with pg_dump (custom format) into
// backups/counterpoise-<time>.dump, or the file given. The database is the one `npm start` uses:
// DATABASE_URL when set (environment or .env), else the cluster of our own (started if need be).
import { mkdirSync, statSync } from 'node:fs'
import { dirname } from 'node:path'
import process from 'node:process'
import { backupDatabase } from './lib/backup.mjs'
import { log } from './lib/run.mjs'
import { prepareEnvironment } from './lib/setup.mjs'

process.chdir(new URL('..', import.meta.url).pathname)
try {
  const env = prepareEnvironment()
  const file = process.argv[2] ?? `backups/counterpoise-${new Date().toISOString().replace(/[:.]/g, '-')}.dump`
  mkdirSync(dirname(file), { recursive: true })
  backupDatabase(env.DATABASE_URL, file)
  log(`backup written: ${file} (${statSync(file).size} bytes). Restore with: npm run restore -- ${file} --yes`)
}
catch (error) {
  console.error(`Backup failed: ${error.message}`)
  process.exitCode = 1
}
