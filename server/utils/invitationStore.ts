import { and, eq, sql } from 'drizzle-orm'
import type { H3Event } from 'h3'
import { invitations, roomMembers, type Invitation, type Room } from '../database/schema'
import { InvitationTokenParams } from '../../shared/schemas/invitations'
import type { Db, Tx } from './db'

/** The token from the route, or the one 404 every dead link gets (a malformed token is just as dead). */
export function invitationTokenOf(event: H3Event) {
  const parsed = InvitationTokenParams.safeParse(getRouterParams(event))
  if (!parsed.success) throw deadInvitation()
  return parsed.data.token
}

/**
 * The pending, unexpired invitation with this token, or 404 with the one message for all dead links.
 * With `lock`, the row stays locked (FOR UPDATE) until the transaction ends, so two accepts of the
 * same link are serialised and the second finds it no longer pending.
 */
export async function liveInvitation(db: Db | Tx, token: string, { lock = false } = {}) {
  const query = db.select().from(invitations).where(eq(invitations.tokenHash, hashInvitationToken(token)))
  const [row] = lock ? await query.for('update') : await query
  if (!row || invitationStateOf(row) !== 'invited') throw deadInvitation()
  return row
}

/** What the facilitator's list shows of an invitation: never the token or its hash. */
export function invitationView(row: Invitation, names: { invitedBy?: string | null, acceptedBy?: string | null } = {}) {
  return {
    id: row.id,
    email: row.email,
    role: row.role,
    state: invitationStateOf(row),
    sendCount: row.sendCount,
    lastSentAt: row.lastSentAt,
    expiresAt: row.expiresAt,
    createdAt: row.createdAt,
    acceptedAt: row.acceptedAt,
    invitedBy: names.invitedBy ?? null,
    acceptedBy: names.acceptedBy ?? null,
  }
}
export type InvitationView = ReturnType<typeof invitationView>

/** Compose and send the invitation e-mail for a freshly issued token; throws 503 when it cannot be sent. */
export async function sendInvitationEmail(event: H3Event, input: { to: string, token: string, room: Pick<Room, 'title' | 'question'>, role: Invitation['role'], inviterName: string, expiresAt: Date }) {
  const mail = invitationEmail({
    inviterName: input.inviterName,
    roomTitle: input.room.title,
    roomQuestion: input.room.question,
    role: input.role,
    link: `${publicOrigin(event)}/invitations/${input.token}`,
    expiresAt: input.expiresAt,
  })
  await sendMail({ to: input.to, ...mail })
}

/**
 * Use a locked, live invitation for `userId` inside `tx`: add the member with the invited role (someone
 * already in the room keeps their role), mark the invitation accepted by that account, audit it.
 */
export async function acceptInvitation(tx: Tx, invitation: Invitation, userId: string, { newAccount = false } = {}) {
  const [existing] = await tx.select({ role: roomMembers.role }).from(roomMembers)
    .where(and(eq(roomMembers.roomId, invitation.roomId), eq(roomMembers.userId, userId)))
  if (!existing) await tx.insert(roomMembers).values({ roomId: invitation.roomId, userId, role: invitation.role })
  await tx.update(invitations)
    .set({ status: 'accepted', acceptedBy: userId, acceptedAt: sql`now()` })
    .where(eq(invitations.id, invitation.id))
  const role = existing?.role ?? invitation.role
  await audit({
    actorId: userId,
    roomId: invitation.roomId,
    action: 'invitation.accepted',
    details: { invitationId: invitation.id, email: invitation.email, invitedRole: invitation.role, role, alreadyMember: !!existing, newAccount },
  }, tx)
  return { roomId: invitation.roomId, role, alreadyMember: !!existing }
}

/**
 * Lock every membership row of a room (in `tx`) and return them: role changes and removals take this
 * lock first, so two of them cannot each leave the other as "the last facilitator" and both proceed.
 */
export async function lockRoomMembers(tx: Tx, roomId: string) {
  return tx.select({ userId: roomMembers.userId, role: roomMembers.role }).from(roomMembers)
    .where(eq(roomMembers.roomId, roomId)).for('update')
}
