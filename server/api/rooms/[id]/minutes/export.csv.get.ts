import Papa from 'papaparse'
import { z } from 'zod'
import { RoomParams } from '../../../../../shared/schemas/rooms'
import { MINUTES_TABLES, minutesTableRows } from '../../../../../shared/utils/minutesExport'

const Query = z.object({ table: z.enum(MINUTES_TABLES, { message: `table must be one of: ${MINUTES_TABLES.join(', ')}.` }) })

/** One table of the decision record as CSV (?table=alternatives|weightings|vote), formula-safe. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  const { room } = await requireRoomPermission(id, user.id, 'minutes:view')
  const query = Query.safeParse(getQuery(event))
  if (!query.success) throw createError({ statusCode: 400, message: query.error.issues[0]!.message })
  const minutes = await minutesContent(id)
  setResponseHeaders(event, {
    'content-type': 'text/csv; charset=utf-8',
    'content-disposition': `attachment; filename="${exportFileName(room.title, minutes.ledger.version)}-${query.data.table}.csv"`,
  })
  return `\uFEFF${Papa.unparse(minutesTableRows(minutes, query.data.table), { quotes: true })}\r\n`
})
