import { auditLog } from '../database/schema'
import type { Tx } from './db'

export interface AuditInput {
  actorId: string | null
  roomId?: string | null
  action: string
  details?: Record<string, unknown>
}

/** Append to the audit log, inside the caller's transaction when one is given. */
export async function audit(entry: AuditInput, tx?: Tx) {
  await (tx ?? useDb()).insert(auditLog).values({
    actorId: entry.actorId,
    roomId: entry.roomId ?? null,
    action: entry.action,
    details: entry.details ?? {},
  })
}
