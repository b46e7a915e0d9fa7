import { and, eq, ne, sql } from 'drizzle-orm'
import { SiteRoleBody, UserParams } from '../../../../shared/schemas/rooms'
import { users } from '../../../database/schema'

export default defineEventHandler(async (event) => {
  const admin = await requireAdmin(event)
  const { id } = validParams(event, UserParams)
  const { siteRole } = await validBody(event, SiteRoleBody)
  return useDb().transaction(async (tx) => {
    // Serialise role changes so two admins cannot demote each other at once and leave none.
    await tx.execute(sql`SELECT pg_advisory_xact_lock(727002)`)
    const [target] = await tx.select().from(users).where(eq(users.id, id))
    if (!target) throw createError({ statusCode: 404, message: 'No such user.' })
    if (target.siteRole === 'admin' && siteRole !== 'admin') {
      const [other] = await tx.select({ id: users.id }).from(users).where(and(eq(users.siteRole, 'admin'), ne(users.id, id))).limit(1)
      if (!other) throw createError({ statusCode: 409, message: 'This is the last site administrator; make someone else an administrator first.' })
    }
    const [updated] = await tx.update(users).set({ siteRole }).where(eq(users.id, id))
      .returning({ id: users.id, email: users.email, displayName: users.displayName, siteRole: users.siteRole })
    await audit({ actorId: admin.id, action: 'user.site-role-changed', details: { userId: id, from: target.siteRole, to: siteRole } }, tx)
    return updated
  })
})
