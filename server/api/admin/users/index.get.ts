import { asc } from 'drizzle-orm'
import { users } from '../../../database/schema'

export default defineEventHandler(async (event) => {
  await requireAdmin(event)
  return useDb()
    .select({ id: users.id, email: users.email, displayName: users.displayName, siteRole: users.siteRole, createdAt: users.createdAt })
    .from(users)
    .orderBy(asc(users.displayName))
})
