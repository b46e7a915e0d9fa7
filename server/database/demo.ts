/**
 * The demo: a fictional coastal town, Kelderwick, and its people. Every name and number is
 * invented for Counterpoise. Loaded idempotently by scripts/seed.ts on `npm start` and `npm test`.
 */
import type { RoomRole, SiteRole } from '../../shared/roles'

/** Shared by every demo account; printed by npm start. Demo only: never used outside the demo. */
export const DEMO_PASSWORD = 'kelderwick-demo'

export interface DemoAccount {
  email: string
  displayName: string
  siteRole: SiteRole
  roomRole: RoomRole | null
}

export const DEMO_ACCOUNTS: readonly DemoAccount[] = [
  { email: 'facilitator@demo.counterpoise.example', displayName: 'Morwenna Tallis', siteRole: 'user', roomRole: 'facilitator' },
  { email: 'harbour@demo.counterpoise.example', displayName: 'Idris Penhale', siteRole: 'user', roomRole: 'stakeholder' },
  { email: 'wildlife@demo.counterpoise.example', displayName: 'Bea Quiller', siteRole: 'user', roomRole: 'stakeholder' },
  { email: 'residents@demo.counterpoise.example', displayName: 'Tomos Vane', siteRole: 'user', roomRole: 'stakeholder' },
  { email: 'observer@demo.counterpoise.example', displayName: 'Orla Kestle', siteRole: 'user', roomRole: 'observer' },
  { email: 'secretary@demo.counterpoise.example', displayName: 'Jem Carrow', siteRole: 'user', roomRole: 'secretary' },
  { email: 'admin@demo.counterpoise.example', displayName: 'Site Administrator', siteRole: 'admin', roomRole: null },
]

/** Fixed id so that loading the demo twice finds the same room. */
export const DEMO_ROOM_ID = '6b1f3c2e-4a5d-4e8f-9a10-0c0ffee0d3e0'

export const DEMO_ROOM = {
  id: DEMO_ROOM_ID,
  title: 'Kelderwick sea-front defences',
  question: 'Which flood-defence scheme should Kelderwick put forward for funding this year?',
} as const
