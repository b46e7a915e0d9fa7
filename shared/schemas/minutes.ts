import { z } from 'zod'

/** A signed minutes record of a room. */
export const MinutesRecordParams = z.object({
  id: z.uuid({ error: 'That is not a room id.' }),
  recordId: z.uuid({ error: 'That is not a minutes record id.' }),
})

/** The download address names the file: `<record id>.pdf`. */
export const MinutesRecordFileParams = z.object({
  id: z.uuid({ error: 'That is not a room id.' }),
  recordId: z.string().regex(/^[0-9a-f-]{36}\.pdf$/i, { error: 'Name the file as <record id>.pdf.' }).transform(s => s.slice(0, -4)).pipe(z.uuid()),
})
