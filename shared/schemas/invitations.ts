import { z } from 'zod'
import { ROOM_ROLES } from '../roles'
import { SignUpBody } from './auth'

/** What the People panel shows for an invitation (derived on the server from status and expiry). */
export const INVITATION_STATES = ['invited', 'joined', 'expired', 'revoked'] as const
export type InvitationState = (typeof INVITATION_STATES)[number]

/** Days an invitation link works after it was (last) sent. */
export const INVITATION_LIFETIME_DAYS = 7

const role = z.enum(ROOM_ROLES, { error: `Choose a role: ${ROOM_ROLES.join(', ')}.` })

export const InviteBody = z.object({
  email: z.string({ error: 'Enter their e-mail address.' })
    .trim()
    .min(1, { error: 'Enter their e-mail address.' })
    .max(254, { error: 'That e-mail address is too long.' })
    .pipe(z.email({ error: 'That does not look like an e-mail address.' })),
  role,
})
export type InviteBody = z.infer<typeof InviteBody>

export const InvitationParams = z.object({
  id: z.uuid(),
  invitationId: z.uuid(),
})

export const MemberParams = z.object({
  id: z.uuid(),
  userId: z.uuid(),
})

export const MemberRoleBody = z.object({ role })
export type MemberRoleBody = z.infer<typeof MemberRoleBody>

/** Invitation tokens: 32 random bytes in base64url (43 characters). */
export const InvitationTokenParams = z.object({
  token: z.string().regex(/^[\w-]{43}$/),
})

/** Accepting without an account: the account is made for the invited address. */
export const AcceptInvitationBody = SignUpBody.pick({ displayName: true, password: true })
export type AcceptInvitationBody = z.infer<typeof AcceptInvitationBody>

/** Room codes are typed by people reading a projector: spaces, dashes and case do not matter. */
export const JoinRoomBody = z.object({
  code: z.string({ error: 'Enter the room code.' })
    .transform(s => s.replace(/[\s-]/g, '').toUpperCase())
    .pipe(z.string()
      .min(1, { error: 'Enter the room code.' })
      .regex(/^[A-Z0-9]{6}$/, { error: 'A room code has 6 letters and digits, like K7MQ2P.' })),
})
export type JoinRoomBody = z.infer<typeof JoinRoomBody>
