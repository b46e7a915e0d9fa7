import { execFile } from 'node:child_process'
import { randomUUID } from 'node:crypto'
import { promisify } from 'node:util'
import { afterAll, describe, expect, it } from 'vitest'
import { DEMO_ACCOUNTS, DEMO_ROOM_ID } from '../../server/database/demo'
import pg from 'pg'
import { closeTestDb, count, testDb } from '../support/db'

const run = promisify(execFile)
afterAll(closeTestDb)

const snapshot = async () => ({
  users: await count('users'),
  rooms: await count('rooms'),
  members: await count('room_members'),
  demoMembers: await count('room_members', 'room_id = $1', [DEMO_ROOM_ID]),
  migrations: await count('drizzle.__drizzle_migrations'),
})

describe('set-up can run again', () => {
  it('loads the demo once: a second and third load change nothing', async () => {
    const before = await snapshot()
    expect(before.demoMembers).toBe(DEMO_ACCOUNTS.filter(a => a.roomRole).length)
    await run('npx', ['tsx', 'scripts/seed.ts'], { env: process.env })
    await run('npx', ['tsx', 'scripts/seed.ts'], { env: process.env })
    expect(await snapshot()).toEqual(before)
  })

  it('lets two migrators start at once on an empty database: the advisory lock serialises them', async () => {
    // Without the lock both would run CREATE TYPE/TABLE and one would fail.
    const name = `counterpoise_migrate_${randomUUID().slice(0, 8)}`
    await testDb().query(`create database ${name}`)
    try {
      const url = new URL(process.env.DATABASE_URL!)
      url.pathname = `/${name}`
      const env = { ...process.env, DATABASE_URL: url.toString() }
      await Promise.all([run('npx', ['tsx', 'scripts/migrate.ts'], { env }), run('npx', ['tsx', 'scripts/migrate.ts'], { env })])
      const fresh = new pg.Client({ connectionString: url.toString() })
      await fresh.connect()
      const { rows } = await fresh.query('select count(*)::int as n from drizzle.__drizzle_migrations')
      const tables = await fresh.query('select table_name from information_schema.tables where table_schema = \'public\' order by 1')
      await fresh.end()
      expect(rows[0].n).toBe(await count('drizzle.__drizzle_migrations'))
      expect(tables.rows.map(r => r.table_name)).toEqual(expect.arrayContaining(['users', 'rooms', 'room_members', 'audit_log']))
    }
    finally {
      await testDb().query(`drop database if exists ${name} with (force)`)
    }
  })

  it('migrates again without change', async () => {
    const before = await snapshot()
    await run('npx', ['tsx', 'scripts/migrate.ts'], { env: process.env })
    expect(await snapshot()).toEqual(before)
  })
})
