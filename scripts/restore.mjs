#!/usr/bin/env node
// `npm run restore -- <file> --yes`: replace the app's database with a backup made by
// `npm run backup`. Everything the backup holds is dropped and loaded again in one transaction;
// stop the app first. Without --yes it only says what it would do.
import { existsSync } from 'node:fs'
import process from 'node:process'
import { restoreDatabase } from './lib/backup.mjs'
import { log } from './lib/run.mjs'
import { prepareEnvironment } from './lib/setup.mjs'

process.chdir(new URL('..', import.meta.url).pathname)
const args = process.argv.slice(2)
const file = args.find(a => !a.startsWith('--'))
try {
  if (!file) throw new Error('name the backup file: npm run restore -- backups/<file>.dump --yes')
  if (!existsSync(file)) throw new Error(`no such backup file: ${file}`)
  const env = prepareEnvironment()
  const where = new URL(env.DATABASE_URL)
  const target = `${where.hostname}:${where.port || 5432}${where.pathname}`
  if (!args.includes('--yes')) {
    console.error(`This replaces the database ${target} with ${file}. Stop the app, then run again with --yes.`)
    process.exitCode = 2
  }
  else {
    restoreDatabase(env.DATABASE_URL, file)
    log(`restored ${file} into ${target}`)
  }
}
catch (error) {
  console.error(`Restore failed: ${error.message}`)
  process.exitCode = 1
}
