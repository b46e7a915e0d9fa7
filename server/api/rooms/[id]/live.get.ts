import { RoomParams } from '../../../../shared/schemas/rooms'
import { roleAllows } from '../../../../shared/roles'

/** The room's live state over HTTP, for the first render before the socket joins. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  const { role } = await requireRoomPermission(id, user.id, 'room:view')
  const state = await liveState(id)
  return {
    role,
    state,
    mine: roleAllows(role, 'weights:submit') ? await mySubmission(id, user.id) : null,
    names: roleAllows(role, 'weighing:run') && state.weighing ? await submittedNames(state.weighing.id) : null,
  }
})
