/**
 * The demo: a fictional coastal town, Kelderwick, and its people. Every name and number is
 * invented for Counterpoise. Loaded idempotently by scripts/seed.ts on `npm start` and `npm test`.
 */
import type { RoomRole, SiteRole } from '../../shared/roles'
import type { Alternative, Criterion } from '../../shared/types/decision'

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
  code: 'KDWK42',
  title: 'Kelderwick sea-front defences',
  question: 'Which flood-defence scheme should Kelderwick put forward for funding this year?',
} as const

/**
 * Kelderwick's ledger: twelve invented flood-defence schemes on six criteria. The numbers are made
 * up to be plausible for a small town, not taken from any real scheme. By design: the offshore reef
 * breaks the capital-cost limit, two schemes are dominated, one is only weakly efficient.
 */
export const DEMO_CRITERIA: Criterion[] = [
  { id: 'capital-cost', name: 'Capital cost', unit: '£m', direction: 'min', lowest: null, highest: 30, precision: 1, description: 'Construction cost at today\'s prices. The funding cap is £30m.' },
  { id: 'upkeep', name: 'Annual upkeep', unit: '£k/yr', direction: 'min', lowest: null, highest: null, precision: 0, description: 'Maintenance and operation each year.' },
  { id: 'homes', name: 'Homes protected', unit: 'homes', direction: 'max', lowest: 600, highest: null, precision: 0, description: 'Homes moved out of the 1-in-200-year flood zone. The scheme must protect at least 600.' },
  { id: 'residual-risk', name: 'Residual flood risk', unit: '% per year', direction: 'min', lowest: null, highest: null, precision: 1, description: 'Chance in any year that the sea front still floods.' },
  { id: 'habitat', name: 'Habitat affected', unit: 'ha', direction: 'min', lowest: null, highest: null, precision: 1, description: 'Salt marsh and dune habitat lost or disturbed.' },
  { id: 'build-time', name: 'Construction time', unit: 'months', direction: 'min', lowest: null, highest: null, precision: 0, description: 'From contract to completion.' },
]

const scheme = (id: string, name: string, [capital, upkeep, homes, risk, habitat, months]: number[]): Alternative => ({
  id,
  name,
  scores: { 'capital-cost': capital!, 'upkeep': upkeep!, 'homes': homes!, 'residual-risk': risk!, 'habitat': habitat!, 'build-time': months! },
})

export const DEMO_ALTERNATIVES: Alternative[] = [
  scheme('a-promenade-wall', 'Raised promenade wall', [18.5, 210, 1450, 1.0, 2.5, 26]),
  scheme('a-tidal-gate', 'Harbour tidal gate', [27.0, 380, 1900, 0.5, 6.0, 40]),
  scheme('a-dune-realignment', 'Dune restoration and managed realignment', [9.5, 120, 1100, 2.0, 14.0, 18]),
  scheme('a-offshore-reef', 'Offshore breakwater reef', [34.0, 150, 1850, 0.8, 9.0, 48]),
  scheme('a-demountable', 'Demountable barriers', [6.5, 290, 800, 3.3, 0.5, 10]),
  scheme('a-nourishment', 'Beach nourishment programme', [12.0, 460, 1200, 1.8, 4.5, 12]),
  scheme('a-revetment-north', 'Rock revetment, north beach', [15.0, 180, 1300, 1.5, 3.5, 22]),
  scheme('a-revetment-both', 'Rock revetment, both beaches', [19.0, 230, 1400, 1.2, 4.0, 28]),
  scheme('a-resilience-grants', 'Property resilience grants', [4.0, 60, 650, 4.0, 0.0, 14]),
  scheme('a-setback-bank', 'Setback embankment', [11.0, 140, 1050, 2.2, 16.0, 20]),
  scheme('a-sluices', 'Upgraded sluices and pumps', [8.0, 330, 900, 3.0, 1.0, 16]),
  scheme('a-wall-gates', 'Promenade wall with flood gates', [18.5, 230, 1450, 1.0, 2.5, 26]),
]
