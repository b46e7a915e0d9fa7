import { describe, expect, it } from 'vitest'
import type { MinutesContent } from '../../../../shared/types/minutes'
import { minutesTableRows } from '../../../../shared/utils/minutesExport'

// A hand-made record: one dominated alternative named like a spreadsheet formula, one round, a vote.
const content = {
  criteria: [
    { id: 'cost', name: 'Cost', unit: '£k' },
    { id: 'reach', name: 'Reach', unit: '' },
  ],
  alternatives: [
    { name: 'Harbour plan', statusLabel: 'Efficient', scoresText: ['10 £k', '500'], dominatedBy: null, worseOn: [], brokenLimits: [], explanation: '' },
    { name: '=HYPERLINK("http://x")', statusLabel: 'Dominated', scoresText: ['12 £k', '400'], dominatedBy: { id: 'h', name: 'Harbour plan' }, worseOn: ['Cost', 'Reach'], brokenLimits: [], explanation: 'Harbour plan is better on every count.' },
  ],
  rounds: [{
    number: 1,
    anonymous: true,
    weightings: [{ label: 'Stakeholder 1', weightsPercent: [60, 40], favourites: ['Harbour plan'] }],
    group: [{ ruleLabel: 'Mean', weightsPercent: [60, 40], favourites: ['Harbour plan'] }, { ruleLabel: 'Median', weightsPercent: null, favourites: [] }],
  }],
  vote: { tally: [{ name: 'Harbour plan', counts: { approve: 2, object: 1, abstain: 0 } }] },
} as unknown as MinutesContent

describe('minutesTableRows', () => {
  it('lists every alternative with its status, scores and reason; a formula-like name is made harmless', () => {
    const rows = minutesTableRows(content, 'alternatives')
    expect(rows[0]).toEqual(['Alternative', 'Status', 'Cost (£k)', 'Reach', 'Dominated by', 'Worse on', 'Limits broken', 'Why set aside'])
    expect(rows[2]).toEqual([`'=HYPERLINK("http://x")`, 'Dominated', '12 £k', '400', 'Harbour plan', 'Cost; Reach', '', 'Harbour plan is better on every count.'])
  })
  it('gives each weighting and each group rule that applied, per round', () => {
    expect(minutesTableRows(content, 'weightings')).toEqual([
      ['Weighing', 'Anonymous', 'Stakeholder', 'Cost weight (%)', 'Reach weight (%)', 'Favourite'],
      ['1', 'yes', 'Stakeholder 1', '60', '40', 'Harbour plan'],
      ['1', 'yes', 'Group (mean)', '60', '40', 'Harbour plan'],
    ])
  })
  it('gives the tally, or only its header without a vote', () => {
    expect(minutesTableRows(content, 'vote')).toEqual([['Alternative', 'Approve', 'Object', 'Abstain'], ['Harbour plan', '2', '1', '0']])
    expect(minutesTableRows({ ...content, vote: null }, 'vote')).toEqual([['Alternative', 'Approve', 'Object', 'Abstain']])
  })
})
