import { sql } from 'drizzle-orm'
import { bigserial, index, jsonb, pgEnum, pgTable, primaryKey, text, timestamp, uniqueIndex, uuid } from 'drizzle-orm/pg-core'
import { ROOM_ROLES, ROOM_STATUSES, SITE_ROLES } from '../../shared/roles'

export const siteRole = pgEnum('site_role', SITE_ROLES)
export const roomRole = pgEnum('room_role', ROOM_ROLES)
export const roomStatus = pgEnum('room_status', ROOM_STATUSES)

export const users = pgTable('users', {
  id: uuid('id').primaryKey().defaultRandom(),
  email: text('email').notNull(),
  displayName: text('display_name').notNull(),
  passwordHash: text('password_hash').notNull(),
  siteRole: siteRole('site_role').notNull().default('user'),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
}, t => [
  // E-mail addresses are unique whatever their case.
  uniqueIndex('users_email_lower_idx').on(sql`lower(${t.email})`),
])

export const rooms = pgTable('rooms', {
  id: uuid('id').primaryKey().defaultRandom(),
  title: text('title').notNull(),
  question: text('question').notNull(),
  status: roomStatus('status').notNull().default('draft'),
  createdBy: uuid('created_by').notNull().references(() => users.id),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
})

export const roomMembers = pgTable('room_members', {
  roomId: uuid('room_id').notNull().references(() => rooms.id, { onDelete: 'cascade' }),
  userId: uuid('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  role: roomRole('role').notNull(),
  joinedAt: timestamp('joined_at', { withTimezone: true }).notNull().defaultNow(),
}, t => [
  primaryKey({ columns: [t.roomId, t.userId] }),
  index('room_members_user_idx').on(t.userId),
])

/** Append-only: the app inserts, never updates or deletes (a trigger in the migration refuses both). */
export const auditLog = pgTable('audit_log', {
  id: bigserial('id', { mode: 'number' }).primaryKey(),
  at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
  actorId: uuid('actor_id').references(() => users.id, { onDelete: 'set null' }),
  roomId: uuid('room_id').references(() => rooms.id, { onDelete: 'set null' }),
  action: text('action').notNull(),
  details: jsonb('details').$type<Record<string, unknown>>().notNull().default({}),
}, t => [
  index('audit_log_room_idx').on(t.roomId, t.at),
])

/** Failed sign-ins, per address and per account, for throttling. Old rows are pruned on write. */
export const signInFailures = pgTable('sign_in_failures', {
  id: bigserial('id', { mode: 'number' }).primaryKey(),
  at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
  ip: text('ip').notNull(),
  email: text('email').notNull(),
}, t => [
  index('sign_in_failures_ip_idx').on(t.ip, t.at),
  index('sign_in_failures_email_idx').on(t.email, t.at),
])

export type User = typeof users.$inferSelect
export type Room = typeof rooms.$inferSelect
export type RoomMember = typeof roomMembers.$inferSelect
export type AuditEntry = typeof auditLog.$inferSelect
