import { LedgerBody } from '../../../../../shared/schemas/ledger'
import { RoomParams } from '../../../../../shared/schemas/rooms'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  await requireRoomPermission(id, user.id, 'ledger:edit')
  const body = await validBody(event, LedgerBody)
  const { version, changed } = await useDb().transaction(tx => saveLedgerVersion(tx, { roomId: id, userId: user.id, ...body }))
  if (changed) useRealtime()?.to(roomChannel(id)).emit('ledger:changed', { roomId: id, version: version.number })
  setResponseStatus(event, changed ? 201 : 200)
  return ledgerView(version)
})
