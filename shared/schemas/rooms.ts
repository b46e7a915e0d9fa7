import { z } from 'zod'
import { SITE_ROLES } from '../roles'
import { multiLine, singleLine } from './text'

export const RoomParams = z.object({
  id: z.uuid({ error: 'That is not a room id.' }),
})

export const CreateRoomBody = z.object({
  title: singleLine(z.string({ error: 'Give the room a title.' }).trim().min(3, { error: 'Use at least 3 characters.' }).max(120, { error: 'Keep the title under 120 characters.' }), 'The title'),
  question: multiLine(z.string({ error: 'State the question the room decides.' }).trim().min(5, { error: 'State the question in a few words.' }).max(500, { error: 'Keep the question under 500 characters.' }), 'The question'),
})
export type CreateRoomBody = z.infer<typeof CreateRoomBody>

export const UserParams = z.object({
  id: z.uuid({ error: 'That is not a user id.' }),
})

export const SiteRoleBody = z.object({
  siteRole: z.enum(SITE_ROLES, { error: `Choose one of: ${SITE_ROLES.join(', ')}.` }),
})
