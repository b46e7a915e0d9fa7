import { sql } from 'drizzle-orm'
import type { AnyPgColumn } from 'drizzle-orm/pg-core'
import { bigserial, boolean, customType, index, integer, jsonb, pgEnum, pgTable, primaryKey, text, timestamp, unique, uniqueIndex, uuid } from 'drizzle-orm/pg-core'
import { ROOM_ROLES, ROOM_STATUSES, SITE_ROLES } from '../../shared/roles'
import type { Alternative, Criterion } from '../../shared/types/decision'
import { INPUT_STYLES, WEIGHING_STATUSES } from '../../shared/weighing'

const bytea = customType<{ data: Buffer, driverData: Buffer }>({ dataType: () => 'bytea' })

export const siteRole = pgEnum('site_role', SITE_ROLES)
export const roomRole = pgEnum('room_role', ROOM_ROLES)
export const roomStatus = pgEnum('room_status', ROOM_STATUSES)

export const users = pgTable('users', {
  id: uuid('id').primaryKey().defaultRandom(),
  email: text('email').notNull(),
  displayName: text('display_name').notNull(),
  passwordHash: text('password_hash').notNull(),
  siteRole: siteRole('site_role').notNull().default('user'),
  /** Bumped when the password changes: a session made under an older epoch is no longer accepted. */
  sessionEpoch: integer('session_epoch').notNull().default(0),
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
  /** Short code people type (or scan as a QR code) to join as observers. */
  code: text('code').notNull().unique(),
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
  // The join limiter counts one person's recent joins.
  index('audit_log_actor_idx').on(t.actorId, t.action, t.at),
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

/** Files uploaded to a room (option tables), kept so the minutes can cite the exact file. */
export const attachments = pgTable('attachments', {
  id: uuid('id').primaryKey().defaultRandom(),
  roomId: uuid('room_id').notNull().references(() => rooms.id, { onDelete: 'cascade' }),
  filename: text('filename').notNull(),
  mediaType: text('media_type').notNull(),
  size: integer('size').notNull(),
  sha256: text('sha256').notNull(),
  content: bytea('content').notNull(),
  uploadedBy: uuid('uploaded_by').references(() => users.id, { onDelete: 'set null' }),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
}, t => [index('attachments_room_idx').on(t.roomId)])

/**
 * The ledger (criteria + alternatives) of a room, one immutable row per confirmed change.
 * Weighings and minutes refer to the version they used; the current one has the highest number.
 */
export const ledgerVersions = pgTable('ledger_versions', {
  id: uuid('id').primaryKey().defaultRandom(),
  roomId: uuid('room_id').notNull().references(() => rooms.id, { onDelete: 'cascade' }),
  number: integer('number').notNull(),
  /** SHA-256 (hex) of the canonical JSON of criteria and alternatives. */
  hash: text('hash').notNull(),
  criteria: jsonb('criteria').$type<Criterion[]>().notNull(),
  alternatives: jsonb('alternatives').$type<Alternative[]>().notNull(),
  note: text('note').notNull().default(''),
  attachmentId: uuid('attachment_id').references(() => attachments.id, { onDelete: 'set null' }),
  createdBy: uuid('created_by').references(() => users.id, { onDelete: 'set null' }),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
}, t => [unique('ledger_versions_room_number').on(t.roomId, t.number)])

export const INVITATION_STATUSES = ['pending', 'accepted', 'revoked'] as const
export const invitationStatus = pgEnum('invitation_status', INVITATION_STATUSES)

/** Invitations by e-mail. Only a hash of the token is stored; a token works once and expires. */
export const invitations = pgTable('invitations', {
  id: uuid('id').primaryKey().defaultRandom(),
  roomId: uuid('room_id').notNull().references(() => rooms.id, { onDelete: 'cascade' }),
  email: text('email').notNull(),
  role: roomRole('role').notNull(),
  tokenHash: text('token_hash').notNull().unique(),
  status: invitationStatus('status').notNull().default('pending'),
  expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
  invitedBy: uuid('invited_by').references(() => users.id, { onDelete: 'set null' }),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  lastSentAt: timestamp('last_sent_at', { withTimezone: true }).notNull().defaultNow(),
  sendCount: integer('send_count').notNull().default(1),
  acceptedBy: uuid('accepted_by').references(() => users.id, { onDelete: 'set null' }),
  acceptedAt: timestamp('accepted_at', { withTimezone: true }),
}, t => [index('invitations_room_idx').on(t.roomId)])

export const weighingStatus = pgEnum('weighing_status', WEIGHING_STATUSES)
export const inputStyle = pgEnum('input_style', INPUT_STYLES)

/** A weighing round: stakeholders weigh the criteria of one ledger version. */
export const weighings = pgTable('weighings', {
  id: uuid('id').primaryKey().defaultRandom(),
  roomId: uuid('room_id').notNull().references(() => rooms.id, { onDelete: 'cascade' }),
  number: integer('number').notNull(),
  ledgerVersionId: uuid('ledger_version_id').notNull().references(() => ledgerVersions.id),
  inputStyle: inputStyle('input_style').notNull().default('sliders'),
  showNames: boolean('show_names').notNull().default(false),
  status: weighingStatus('status').notNull().default('open'),
  /** Optional time limit: submissions after it are refused. */
  closesAt: timestamp('closes_at', { withTimezone: true }),
  openedBy: uuid('opened_by').references(() => users.id, { onDelete: 'set null' }),
  openedAt: timestamp('opened_at', { withTimezone: true }).notNull().defaultNow(),
  closedAt: timestamp('closed_at', { withTimezone: true }),
  revealedAt: timestamp('revealed_at', { withTimezone: true }),
}, t => [
  unique('weighings_room_number').on(t.roomId, t.number),
  // At most one open weighing per room, whatever races the routes lose.
  uniqueIndex('weighings_one_open_per_room').on(t.roomId).where(sql`${t.status} = 'open'`),
])

/** One stakeholder's weights in one weighing; a new submission replaces the earlier one. */
export const submissions = pgTable('submissions', {
  id: uuid('id').primaryKey().defaultRandom(),
  weighingId: uuid('weighing_id').notNull().references(() => weighings.id, { onDelete: 'cascade' }),
  userId: uuid('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  /** Normalised weights (sum 1) in the criterion order of the weighing's ledger version. */
  weights: jsonb('weights').$type<number[]>().notNull(),
  /** For ranking input: criterion ids from most to least important (ties as nested arrays). */
  ranking: jsonb('ranking').$type<(string | string[])[] | null>(),
  /**
   * For aspirations input: the target level of each criterion, in its own unit and the criterion
   * order of the ledger version. `weights` then holds the achievement function's weights (equal).
   */
  aspirations: jsonb('aspirations').$type<number[] | null>(),
  /** The phone's key for this submission: a resend after a reconnect is recognised, not stored twice. */
  idempotencyKey: text('idempotency_key').notNull(),
  /** Keys of the submissions this one replaced (most recent last, at most KEPT_EARLIER_KEYS): a late resend of one changes nothing. */
  earlierKeys: text('earlier_keys').array().notNull().default(sql`'{}'::text[]`),
  revision: integer('revision').notNull().default(1),
  submittedAt: timestamp('submitted_at', { withTimezone: true }).notNull().defaultNow(),
}, t => [unique('submissions_weighing_user').on(t.weighingId, t.userId)])

export const voteStatus = pgEnum('vote_status', ['open', 'closed'])

/** A final vote on a shortlist of one ledger version: approve / object / abstain per alternative. */
export const votes = pgTable('votes', {
  id: uuid('id').primaryKey().defaultRandom(),
  roomId: uuid('room_id').notNull().references(() => rooms.id, { onDelete: 'cascade' }),
  ledgerVersionId: uuid('ledger_version_id').notNull().references(() => ledgerVersions.id),
  /** Alternative ids on the ballot, in ballot order. */
  shortlist: jsonb('shortlist').$type<string[]>().notNull(),
  status: voteStatus('status').notNull().default('open'),
  openedBy: uuid('opened_by').references(() => users.id, { onDelete: 'set null' }),
  openedAt: timestamp('opened_at', { withTimezone: true }).notNull().defaultNow(),
  closedAt: timestamp('closed_at', { withTimezone: true }),
}, t => [uniqueIndex('votes_one_open_per_room').on(t.roomId).where(sql`${t.status} = 'open'`)])

/** One stakeholder's ballot in one vote; casting again replaces it until the vote closes. */
export const ballots = pgTable('ballots', {
  id: uuid('id').primaryKey().defaultRandom(),
  voteId: uuid('vote_id').notNull().references(() => votes.id, { onDelete: 'cascade' }),
  userId: uuid('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  /** Alternative id → 'approve' | 'object' | 'abstain', for every alternative on the ballot. */
  choices: jsonb('choices').$type<Record<string, 'approve' | 'object' | 'abstain'>>().notNull(),
  idempotencyKey: text('idempotency_key').notNull(),
  /** Keys of the ballots this one replaced (as for submissions): a late resend of one changes nothing. */
  earlierKeys: text('earlier_keys').array().notNull().default(sql`'{}'::text[]`),
  revision: integer('revision').notNull().default(1),
  castAt: timestamp('cast_at', { withTimezone: true }).notNull().defaultNow(),
}, t => [unique('ballots_vote_user').on(t.voteId, t.userId)])

/**
 * The decision as the facilitator records it. Once the secretary signs minutes citing it,
 * `frozen_at` is set and a database trigger refuses every later change; corrections are new rows
 * whose `amends` names the original.
 */
export const resolutions = pgTable('resolutions', {
  id: uuid('id').primaryKey().defaultRandom(),
  roomId: uuid('room_id').notNull().references(() => rooms.id, { onDelete: 'cascade' }),
  amends: uuid('amends').references((): AnyPgColumn => resolutions.id),
  ledgerVersionId: uuid('ledger_version_id').notNull().references(() => ledgerVersions.id),
  alternativeId: text('alternative_id').notNull(),
  /** The engine's status of the chosen alternative in that version, at the time of recording. */
  engineStatus: text('engine_status').notNull(),
  justification: text('justification'),
  rationale: text('rationale').notNull(),
  conditions: text('conditions').notNull().default(''),
  dissent: text('dissent').notNull().default(''),
  recordedBy: uuid('recorded_by').references(() => users.id, { onDelete: 'set null' }),
  recordedAt: timestamp('recorded_at', { withTimezone: true }).notNull().defaultNow(),
  frozenAt: timestamp('frozen_at', { withTimezone: true }),
}, t => [index('resolutions_room').on(t.roomId, t.recordedAt)])

/** Signed minutes: the exact PDF bytes and their SHA-256, so a copy can be checked later. */
export const minutesRecords = pgTable('minutes_records', {
  id: uuid('id').primaryKey().defaultRandom(),
  roomId: uuid('room_id').notNull().references(() => rooms.id, { onDelete: 'cascade' }),
  resolutionId: uuid('resolution_id').notNull().references(() => resolutions.id),
  sha256: text('sha256').notNull(),
  pdf: bytea('pdf').notNull(),
  fileName: text('file_name').notNull(),
  signer: text('signer').notNull(),
  signedBy: uuid('signed_by').references(() => users.id, { onDelete: 'set null' }),
  signedAt: timestamp('signed_at', { withTimezone: true }).notNull().defaultNow(),
  sentAt: timestamp('sent_at', { withTimezone: true }),
  sentTo: integer('sent_to').notNull().default(0),
}, t => [uniqueIndex('minutes_records_sha256').on(t.sha256)])

/** Used by @socket.io/postgres-adapter for messages too large for NOTIFY (its documented table). */
export const socketIoAttachments = pgTable('socket_io_attachments', {
  id: bigserial('id', { mode: 'number' }).unique(),
  createdAt: timestamp('created_at', { withTimezone: true }).defaultNow(),
  payload: bytea('payload'),
})

export type User = typeof users.$inferSelect
export type Room = typeof rooms.$inferSelect
export type RoomMember = typeof roomMembers.$inferSelect
export type AuditEntry = typeof auditLog.$inferSelect
export type LedgerVersion = typeof ledgerVersions.$inferSelect
export type Invitation = typeof invitations.$inferSelect
export type Attachment = typeof attachments.$inferSelect
export type Weighing = typeof weighings.$inferSelect
export type Submission = typeof submissions.$inferSelect
export type Vote = typeof votes.$inferSelect
export type Ballot = typeof ballots.$inferSelect
export type Resolution = typeof resolutions.$inferSelect
export type MinutesRecord = typeof minutesRecords.$inferSelect
