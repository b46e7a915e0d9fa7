import Papa from 'papaparse'
import { RoomParams } from '../../../../../shared/schemas/rooms'
import { ledgerExportRows } from '../../../../../shared/utils/ledgerExport'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  const { room } = await requireRoomPermission(id, user.id, 'room:view')
  const view = ledgerView(await ledgerVersionFromQuery(event, id))
  if (!view.version) throw createError({ statusCode: 404, message: 'This room has no ledger yet.' })
  setResponseHeaders(event, {
    'content-type': 'text/csv; charset=utf-8',
    'content-disposition': `attachment; filename="${exportFileName(room.title, view.version.number)}.csv"`,
  })
  // A BOM so spreadsheet programs read the file as UTF-8 (units such as £ and m³).
  return `\uFEFF${Papa.unparse(ledgerExportRows(view), { quotes: true })}\r\n`
})
