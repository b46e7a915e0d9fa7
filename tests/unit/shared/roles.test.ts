import { describe, expect, it } from 'vitest'
import { ROOM_ACTIONS, ROOM_PERMISSIONS, ROOM_ROLES, roleAllows } from '../../../shared/roles'

describe('the room role table', () => {
  it('gives every role a row that names only known actions', () => {
    expect(Object.keys(ROOM_PERMISSIONS).sort()).toEqual([...ROOM_ROLES].sort())
    for (const actions of Object.values(ROOM_PERMISSIONS)) {
      for (const action of actions) expect(ROOM_ACTIONS).toContain(action)
    }
  })

  it.each([
    ['facilitator', 'weighing:run', true],
    ['facilitator', 'resolution:record', true],
    ['facilitator', 'minutes:sign', false],
    ['stakeholder', 'weights:submit', true],
    ['stakeholder', 'vote:cast', true],
    ['stakeholder', 'weighing:run', false],
    ['observer', 'room:view', true],
    ['observer', 'weights:submit', false],
    ['secretary', 'minutes:sign', true],
    ['secretary', 'resolution:record', false],
  ] as const)('%s may %s: %s', (role, action, allowed) => {
    expect(roleAllows(role, action)).toBe(allowed)
  })

  it('lets every member view the room, and nobody without a role do anything', () => {
    for (const role of ROOM_ROLES) expect(roleAllows(role, 'room:view')).toBe(true)
    for (const action of ROOM_ACTIONS) expect(roleAllows(null, action)).toBe(false)
  })

  it('gives each action that needs a person to at least one role', () => {
    for (const action of ROOM_ACTIONS) {
      expect(ROOM_ROLES.some(role => roleAllows(role, action))).toBe(true)
    }
  })
})
