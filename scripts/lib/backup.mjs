// Backups with PostgreSQL's own tools: pg_dump's custom format, restored with pg_restore.
// Client programs, so they run as whoever calls them (root included); the URL carries the password.
import { spawnSync } from 'node:child_process'
import { join } from 'node:path'
import { findBinaries } from './postgres.mjs'

function tool(name, args) {
  const result = spawnSync(join(findBinaries(), name), args, { stdio: ['ignore', 'inherit', 'pipe'], encoding: 'utf8' })
  if (result.status !== 0) throw new Error(`${name} failed (exit ${result.status}): ${(result.stderr || '').trim()}`)
  if (result.stderr?.trim()) process.stderr.write(result.stderr)
}

/**
 * Dump the database at `url` into `file` (custom format: compressed, restorable table by table).
 * `snapshot`: a snapshot exported by another session (pg_export_snapshot), so the dump shows
 * exactly what that session sees; tests use it to compare a restore with its source.
 */
export function backupDatabase(url, file, { snapshot } = {}) {
  tool('pg_dump', ['--format=custom', '--no-owner', '--no-privileges', `--file=${file}`, ...(snapshot ? [`--snapshot=${snapshot}`] : []), `--dbname=${url}`])
}

/**
 * Replace what the database at `url` holds with the backup in `file`: existing objects of the
 * backup are dropped first, and it all happens in one transaction, so a restore that fails leaves
 * the database as it was.
 */
export function restoreDatabase(url, file) {
  tool('pg_restore', ['--clean', '--if-exists', '--no-owner', '--no-privileges', '--single-transaction', '--exit-on-error', `--dbname=${url}`, file])
}
