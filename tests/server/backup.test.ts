/**
 * `npm run backup` / `npm run restore`: a round trip through PostgreSQL's own pg_dump and
 * pg_restore. The source is the shared test database, which other test files keep writing to, so
 * the dump is taken from a snapshot exported by a repeatable-read transaction (pg_dump
 * --snapshot), and the restored copy is compared, table by table, with what that same
 * transaction sees: row counts and an MD5 of every row's text, in order.
 */
import { spawnSync } from 'node:child_process'
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import pg from 'pg'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
// @ts-expect-error plain JavaScript module without types
import { backupDatabase } from '../../scripts/lib/backup.mjs'

const dir = mkdtempSync(join(tmpdir(), 'counterpoise-backup-'))
const targetName = `counterpoise_restore_${process.pid}_${Date.now()}`
let sourceUrl = ''
let targetUrl = ''

type Fingerprint = Record<string, { rows: number, md5: string }>

async function fingerprint(client: pg.Client | pg.PoolClient): Promise<Fingerprint> {
  const { rows: tables } = await client.query<{ name: string }>(
    `select table_name as name from information_schema.tables
      where table_schema = 'public' and table_type = 'BASE TABLE' order by table_name`)
  const result: Fingerprint = {}
  for (const { name } of tables) {
    const { rows } = await client.query<{ rows: number, md5: string }>(
      `select count(*)::int as rows, md5(coalesce(string_agg(t::text, E'\\n' order by t::text), '')) as md5 from public."${name}" t`)
    result[name] = rows[0]!
  }
  return result
}

async function withClient<T>(url: string, work: (client: pg.Client) => Promise<T>): Promise<T> {
  const client = new pg.Client({ connectionString: url })
  await client.connect()
  try {
    return await work(client)
  }
  finally {
    await client.end()
  }
}

const script = (name: string, args: string[], databaseUrl: string) => spawnSync(process.execPath, [`scripts/${name}.mjs`, ...args], {
  env: { ...process.env, DATABASE_URL: databaseUrl },
  encoding: 'utf8',
  timeout: 120_000,
})

beforeAll(async () => {
  sourceUrl = process.env.DATABASE_URL!
  if (!sourceUrl) throw new Error('DATABASE_URL is not set: run through `npm test`.')
  // Test clusters let the app's role create databases (scripts/lib/postgres.mjs).
  await withClient(sourceUrl, client => client.query(`create database ${targetName}`))
  const url = new URL(sourceUrl)
  url.pathname = `/${targetName}`
  targetUrl = url.toString()
})

afterAll(async () => {
  if (targetUrl) await withClient(sourceUrl, client => client.query(`drop database if exists ${targetName} with (force)`))
  rmSync(dir, { recursive: true, force: true })
})

describe('backup and restore', () => {
  it('restores exactly what the backup saw: every table, every row', async () => {
    const file = join(dir, 'snapshot.dump')
    const expected = await withClient(sourceUrl, async (client) => {
      await client.query('begin isolation level repeatable read read only')
      const { rows } = await client.query<{ id: string }>('select pg_export_snapshot() as id')
      const seen = await fingerprint(client)
      backupDatabase(sourceUrl, file, { snapshot: rows[0]!.id })
      await client.query('commit')
      return seen
    })
    // The test database has the demo room and whatever the other tests made: not an empty check.
    expect(expected.rooms!.rows).toBeGreaterThan(0)
    expect(expected.ledger_versions!.rows).toBeGreaterThan(0)
    expect(expected.audit_log!.rows).toBeGreaterThan(0)

    const restored = script('restore', [file, '--yes'], targetUrl)
    expect(restored.status, restored.stderr).toBe(0)
    const actual = await withClient(targetUrl, fingerprint)
    expect(actual).toEqual(expected)

    // The database's own rules come back too: the audit log is still append-only.
    await withClient(targetUrl, async (client) => {
      await expect(client.query('delete from audit_log')).rejects.toThrow(/append-only/)
    })
  }, 180_000)

  it('`npm run backup` writes a dump that restores; `restore` without --yes changes nothing', async () => {
    const file = join(dir, 'cli.dump')
    const made = script('backup', [file], sourceUrl)
    expect(made.status, made.stderr).toBe(0)
    expect(statSync(file).size).toBeGreaterThan(1000)

    const before = await withClient(targetUrl, fingerprint)
    const refused = script('restore', [file], targetUrl)
    expect(refused.status).toBe(2)
    expect(refused.stderr).toMatch(/--yes/)
    expect(await withClient(targetUrl, fingerprint)).toEqual(before)

    const restored = script('restore', [file, '--yes'], targetUrl)
    expect(restored.status, restored.stderr).toBe(0)
    const after = await withClient(targetUrl, fingerprint)
    expect(after.users!.rows).toBeGreaterThan(0)
    expect(Object.keys(after).sort()).toEqual(Object.keys(before).sort())
  }, 180_000)

  it('a damaged backup is refused and leaves the database as it was', async () => {
    const good = join(dir, 'cli.dump')
    const damaged = join(dir, 'damaged.dump')
    const bytes = readFileSync(good)
    writeFileSync(damaged, bytes.subarray(0, Math.floor(bytes.length * 0.6)))
    const before = await withClient(targetUrl, fingerprint)
    const failed = script('restore', [damaged, '--yes'], targetUrl)
    expect(failed.status).toBe(1)
    expect(failed.stderr).toMatch(/Restore failed/)
    expect(await withClient(targetUrl, fingerprint)).toEqual(before)

    const missing = script('restore', [join(dir, 'no-such.dump'), '--yes'], targetUrl)
    expect(missing.status).toBe(1)
    expect(missing.stderr).toMatch(/no such backup file/)
  }, 180_000)
})
