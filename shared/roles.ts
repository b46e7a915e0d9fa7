/**
 * Who may do what. Written once here; the server enforces it with requireRoomRole /
 * requireRoomPermission (server/utils/access.ts), the pages only use it to decide what to show.
 */
export const SITE_ROLES = ['user', 'admin'] as const
export type SiteRole = (typeof SITE_ROLES)[number]

export const ROOM_ROLES = ['facilitator', 'stakeholder', 'observer', 'secretary'] as const
export type RoomRole = (typeof ROOM_ROLES)[number]

export const ROOM_STATUSES = ['draft', 'live', 'decided', 'archived'] as const
export type RoomStatus = (typeof ROOM_STATUSES)[number]

export const ROOM_ACTIONS = [
  'room:view',
  'room:manage',
  'ledger:edit',
  'people:manage',
  'weighing:run',
  'weights:submit',
  'vote:cast',
  'resolution:record',
  'minutes:view',
  'minutes:sign',
] as const
export type RoomAction = (typeof ROOM_ACTIONS)[number]

export const ROOM_PERMISSIONS: Readonly<Record<RoomRole, readonly RoomAction[]>> = {
  facilitator: ['room:view', 'room:manage', 'ledger:edit', 'people:manage', 'weighing:run', 'resolution:record', 'minutes:view'],
  stakeholder: ['room:view', 'weights:submit', 'vote:cast'],
  observer: ['room:view'],
  secretary: ['room:view', 'minutes:view', 'minutes:sign'],
}

/** Whether a room role allows an action. Unknown roles allow nothing. */
export function roleAllows(role: RoomRole | null | undefined, action: RoomAction): boolean {
  return role != null && (ROOM_PERMISSIONS[role] ?? []).includes(action)
}

export const ROOM_ROLE_LABELS: Readonly<Record<RoomRole, string>> = {
  facilitator: 'Facilitator',
  stakeholder: 'Stakeholder',
  observer: 'Observer',
  secretary: 'Secretary',
}
