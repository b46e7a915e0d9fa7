import { createHash, randomBytes } from 'node:crypto'
import { createError, getRequestURL, type H3Event } from 'h3'
import { ROOM_ROLE_LABELS, type RoomRole } from '../../shared/roles'
import { INVITATION_LIFETIME_DAYS, type InvitationState } from '../../shared/schemas/invitations'
import { escapeHtml } from './mail'

/** One message for every link that does not work, so a link's history cannot be probed. */
export const DEAD_INVITATION_MESSAGE = 'This invitation link does not work any more: it may have been used, withdrawn or replaced by a newer one, or it may have expired. Ask the person who invited you to send it again.'

export function deadInvitation() {
  return createError({ statusCode: 404, message: DEAD_INVITATION_MESSAGE })
}

/** A new invitation token (32 random bytes, base64url) and the SHA-256 (hex) that is all we store. */
export function newInvitationToken() {
  const token = randomBytes(32).toString('base64url')
  return { token, tokenHash: hashInvitationToken(token) }
}

export function hashInvitationToken(token: string) {
  return createHash('sha256').update(token, 'utf8').digest('hex')
}

export function invitationExpiry(from = new Date()) {
  return new Date(from.getTime() + INVITATION_LIFETIME_DAYS * 24 * 60 * 60 * 1000)
}

/** invited / joined / expired / revoked, from the stored status and the expiry time. */
export function invitationStateOf(row: { status: 'pending' | 'accepted' | 'revoked', expiresAt: Date }, now = new Date()): InvitationState {
  if (row.status === 'accepted') return 'joined'
  if (row.status === 'revoked') return 'revoked'
  return row.expiresAt.getTime() <= now.getTime() ? 'expired' : 'invited'
}

/**
 * An address shown to whoever holds the link, without giving it away: the first character of the
 * local part, then dots, then the domain ("m•••@example.org"). Malformed input is masked entirely.
 */
export function maskEmailAddress(email: string) {
  const at = email.lastIndexOf('@')
  if (at < 1) return '•••'
  return `${email[0]}•••${email.slice(at)}`
}

/**
 * The address links in e-mails point at: COUNTERPOISE_PUBLIC_URL when set (set it in production:
 * the Host header is the client's word), otherwise the origin of the request.
 */
export function publicOrigin(event: H3Event) {
  const configured = process.env.COUNTERPOISE_PUBLIC_URL
  if (configured) return configured.replace(/\/+$/, '')
  return getRequestURL(event, { xForwardedProto: true }).origin
}

export interface InvitationEmailInput {
  inviterName: string
  roomTitle: string
  roomQuestion: string
  role: RoomRole
  link: string
  expiresAt: Date
}

const ROLE_DUTIES: Record<RoomRole, string> = {
  facilitator: 'prepare the ledger, invite people and run the meeting',
  stakeholder: 'weigh the criteria from your phone and vote',
  observer: 'follow the meeting, for example on the big screen',
  secretary: 'keep the record and sign the minutes',
}

/** Subject, plain text and HTML of an invitation. Every name and title is escaped in the HTML. */
export function invitationEmail(input: InvitationEmailInput) {
  const roleLabel = ROOM_ROLE_LABELS[input.role]
  const expires = new Intl.DateTimeFormat('en-GB', { dateStyle: 'long', timeStyle: 'short', timeZone: 'UTC' }).format(input.expiresAt)
  const subject = `${input.inviterName} invited you to “${input.roomTitle}” on Counterpoise`
  const text = [
    `${input.inviterName} invited you to join the room “${input.roomTitle}” on Counterpoise as ${roleLabel.toLowerCase()}.`,
    '',
    `The question: ${input.roomQuestion}`,
    `As ${roleLabel.toLowerCase()} you ${ROLE_DUTIES[input.role]}.`,
    '',
    'Open this link to join (it works once, until ' + expires + ' UTC):',
    input.link,
    '',
    'If you were not expecting this, you can ignore this message.',
  ].join('\n')
  const html = `<!doctype html>
<html lang="en"><body style="font-family: Nunito, Arial, sans-serif; color: #12393a; line-height: 1.5">
<p>${escapeHtml(input.inviterName)} invited you to join the room <strong>${escapeHtml(input.roomTitle)}</strong> on Counterpoise as ${escapeHtml(roleLabel.toLowerCase())}.</p>
<p>The question: ${escapeHtml(input.roomQuestion)}<br>As ${escapeHtml(roleLabel.toLowerCase())} you ${escapeHtml(ROLE_DUTIES[input.role])}.</p>
<p><a href="${escapeHtml(input.link)}" style="display: inline-block; padding: 12px 20px; background: #12393a; color: #ffffff; border-radius: 10px; font-weight: bold; text-decoration: none">Join as ${escapeHtml(roleLabel.toLowerCase())}</a></p>
<p style="color: #454e57">The link works once, until ${escapeHtml(expires)} UTC. If the button does not work, copy this address into your browser:<br>${escapeHtml(input.link)}</p>
<p style="color: #454e57">If you were not expecting this, you can ignore this message.</p>
</body></html>`
  return { subject, text, html }
}
