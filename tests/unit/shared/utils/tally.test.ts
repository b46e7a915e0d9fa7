import { describe, expect, it } from 'vitest'
import { mostApproved, tallyBallots, tallyLine } from '../../../../shared/utils/tally'

const names: Record<string, string> = { a: 'Alpha', b: 'Beta', c: 'Gamma' }

describe('tallyBallots', () => {
  it('counts each choice per alternative in ballot order', () => {
    const rows = tallyBallots(['b', 'a', 'c'], id => names[id]!, [
      { choices: { a: 'approve', b: 'object', c: 'abstain' } },
      { choices: { a: 'approve', b: 'approve', c: 'object' } },
      { choices: { a: 'object', b: 'approve', c: 'approve' } },
    ])
    expect(rows).toEqual([
      { alternativeId: 'b', name: 'Beta', approve: 2, object: 1, abstain: 0 },
      { alternativeId: 'a', name: 'Alpha', approve: 2, object: 1, abstain: 0 },
      { alternativeId: 'c', name: 'Gamma', approve: 1, object: 1, abstain: 1 },
    ])
    // Every ballot is counted exactly once per alternative.
    for (const row of rows) expect(row.approve + row.object + row.abstain).toBe(3)
  })

  it('ignores choices for alternatives not on the ballot and values that are not choices', () => {
    const rows = tallyBallots(['a'], id => names[id]!, [{ choices: { a: 'approve', z: 'approve', b: 'object' } }, { choices: { a: 'maybe' as 'approve' } }])
    expect(rows).toEqual([{ alternativeId: 'a', name: 'Alpha', approve: 1, object: 0, abstain: 0 }])
  })

  it('gives an empty tally for no ballots', () => {
    expect(tallyBallots(['a', 'b'], id => names[id]!, []).every(r => r.approve + r.object + r.abstain === 0)).toBe(true)
  })
})

describe('mostApproved and tallyLine', () => {
  it('lists every alternative level at the top, none when nobody approved', () => {
    const row = (alternativeId: string, approve: number) => ({ alternativeId, name: alternativeId, approve, object: 0, abstain: 0 })
    expect(mostApproved([row('a', 2), row('b', 3), row('c', 3)])).toEqual(['b', 'c'])
    expect(mostApproved([row('a', 0), row('b', 0)])).toEqual([])
    expect(tallyLine({ approve: 3, object: 1, abstain: 0 })).toBe('3 approve · 1 object · 0 abstain')
  })
})
