/**
 * The decision record for the archive (GET /api/rooms/:id/minutes/export.json): the minutes'
 * content, and beside it in full what the minutes only summarise: every resolution with its whole
 * text and amendment chain, every vote with its tally, and every audit entry of the room.
 */
import type { MinutesContent } from './minutes'
import type { MinutesRecordView, ResolutionView, VoteView } from './resolution'

export interface DecisionRecordResolution extends ResolutionView {
  /** The earlier resolutions this one corrects, nearest first (`amends`, then what that amends, …). */
  amendsChain: string[]
  /** The later resolutions that correct this one directly. */
  amendedBy: string[]
}

export interface DecisionRecordAuditEntry {
  id: number
  at: string
  action: string
  /** The display name of who did it; null when the account is gone or the system did it. */
  actor: string | null
  details: Record<string, unknown>
}

export interface DecisionRecordExport {
  format: 'counterpoise-decision-record'
  /** 2: adds resolutions, votes and audit in full. */
  formatVersion: 2
  exportedAt: string
  /** What the preview shows and the PDF prints, for the room's newest resolution. */
  minutes: MinutesContent
  /** Every resolution of the room, oldest first. */
  resolutions: DecisionRecordResolution[]
  /** Every final vote of the room with its tally (who chose what is not part of the record), oldest first. */
  votes: Omit<VoteView, 'ballots'>[]
  /** Every audit entry of the room, oldest first. */
  audit: DecisionRecordAuditEntry[]
  /** The signed minutes this server holds for the room, oldest first. */
  signedMinutes: MinutesRecordView[]
}
