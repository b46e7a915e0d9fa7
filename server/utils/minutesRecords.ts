/** What this server holds about minutes it signed, found by the signed file's SHA-256. */
export interface MinutesRecordMatch {
  roomTitle: string
  /** When the minutes were signed (ISO 8601). */
  signedAt: string
}

/**
 * The minutes record whose signed PDF has this SHA-256 (lower-case hexadecimal), or null.
 *
 * TODO(minutes): the minutes records table does not exist yet, so this always answers null. Once it
 * does, look the hash up there (an index on the hash column) and return the room's title and the
 * signing time; the public check page shows both, and nothing else about the room.
 */
export async function findMinutesRecordBySha256(sha256: string): Promise<MinutesRecordMatch | null> {
  void sha256
  return null
}
