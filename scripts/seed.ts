/**
 * Load the demo accounts and the demo room. Idempotent: running it twice changes nothing
 * (existing accounts keep their passwords, existing rooms their contents).
 */
import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'
import { eq, sql } from 'drizzle-orm'
import { drizzle } from 'drizzle-orm/node-postgres'
import pg from 'pg'
import { DEMO_ACCOUNTS, DEMO_ALTERNATIVES, DEMO_CRITERIA, DEMO_PASSWORD, DEMO_ROOM } from '../server/database/demo'
import { ledgerHash } from '../server/database/ledgerHash'
import { auditLog, ledgerVersions, roomMembers, rooms, users } from '../server/database/schema'

export async function seedDemo(url: string) {
  const pool = new pg.Pool({ connectionString: url, max: 1 })
  const db = drizzle(pool)
  // The same scrypt driver and defaults as nuxt-auth-utils' hashPassword, so the app verifies these.
  const hash = new Hash(new Scrypt({}))
  try {
    await db.transaction(async (tx) => {
      const ids = new Map<string, string>()
      for (const account of DEMO_ACCOUNTS) {
        const [existing] = await tx.select({ id: users.id }).from(users).where(sql`lower(${users.email}) = lower(${account.email})`)
        if (existing) {
          ids.set(account.email, existing.id)
          continue
        }
        const [row] = await tx.insert(users).values({
          email: account.email,
          displayName: account.displayName,
          siteRole: account.siteRole,
          passwordHash: await hash.make(DEMO_PASSWORD),
        }).returning({ id: users.id })
        ids.set(account.email, row!.id)
      }
      const facilitatorId = ids.get(DEMO_ACCOUNTS.find(a => a.roomRole === 'facilitator')!.email)!
      const inserted = await tx.insert(rooms).values({ ...DEMO_ROOM, createdBy: facilitatorId }).onConflictDoNothing().returning({ id: rooms.id })
      if (inserted.length > 0) {
        await tx.insert(auditLog).values({ actorId: facilitatorId, roomId: DEMO_ROOM.id, action: 'room.created', details: { title: DEMO_ROOM.title, source: 'demo' } })
      }
      const [ledger] = await tx.select({ id: ledgerVersions.id }).from(ledgerVersions).where(eq(ledgerVersions.roomId, DEMO_ROOM.id)).limit(1)
      if (!ledger) {
        const hash = ledgerHash(DEMO_CRITERIA, DEMO_ALTERNATIVES)
        await tx.insert(ledgerVersions).values({ roomId: DEMO_ROOM.id, number: 1, hash, criteria: DEMO_CRITERIA, alternatives: DEMO_ALTERNATIVES, note: 'Demo ledger', createdBy: facilitatorId })
        await tx.insert(auditLog).values({ actorId: facilitatorId, roomId: DEMO_ROOM.id, action: 'ledger.version-created', details: { number: 1, hash: hash.slice(0, 12), note: 'Demo ledger', source: 'demo' } })
      }
      for (const account of DEMO_ACCOUNTS) {
        if (!account.roomRole) continue
        await tx.insert(roomMembers).values({ roomId: DEMO_ROOM.id, userId: ids.get(account.email)!, role: account.roomRole }).onConflictDoNothing()
      }
    })
  }
  finally {
    await pool.end()
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const url = process.env.DATABASE_URL
  if (!url) {
    console.error('DATABASE_URL is not set (npm start and npm test set it for you).')
    process.exit(2)
  }
  await seedDemo(url)
  console.log('[counterpoise] demo data loaded')
}
