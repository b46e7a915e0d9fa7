import { describe, expect, it } from 'vitest'
import { DEMO_ACCOUNTS, DEMO_ALTERNATIVES, DEMO_CRITERIA, DEMO_PASSWORD } from '../../../server/database/demo'
import { analyseLedger } from '../../../shared/utils/ledger'
// @ts-expect-error plain ESM script without types
import { DEMO } from '../../../scripts/lib/demo-banner.mjs'

describe('the Kelderwick demo', () => {
  const analysis = analyseLedger(DEMO_CRITERIA, DEMO_ALTERNATIVES)
  const status = (id: string) => analysis.alternatives.find(v => v.id === id)!

  it('has about a dozen schemes on six criteria, with the statuses it was designed to show', () => {
    expect(DEMO_ALTERNATIVES).toHaveLength(12)
    expect(DEMO_CRITERIA).toHaveLength(6)
    // Worked by hand from the scores in server/database/demo.ts.
    expect(analysis.counts).toEqual({ 'infeasible': 1, 'dominated': 2, 'weakly-efficient': 1, 'efficient': 8 })
  })

  it('sets the offshore reef aside for breaking the £30m cap', () => {
    expect(status('a-offshore-reef').status).toBe('infeasible')
    expect(status('a-offshore-reef').brokenLimits).toEqual([{ criterionId: 'capital-cost', limit: 'highest', limitValue: 30, value: 34 }])
  })

  it('explains the pruned schemes', () => {
    expect(status('a-revetment-both')).toMatchObject({ status: 'dominated', dominatedBy: 'a-promenade-wall' })
    expect(status('a-revetment-both').worseOn).toHaveLength(6)
    expect(status('a-setback-bank')).toMatchObject({ status: 'dominated', dominatedBy: 'a-dune-realignment' })
    // Same as the wall except dearer upkeep: dominated, but nothing is better on every criterion.
    expect(status('a-wall-gates')).toMatchObject({ status: 'weakly-efficient', dominatedBy: 'a-promenade-wall', worseOn: ['upkeep'] })
  })

  it('prints every demo account and the password in the start banner', () => {
    expect(DEMO).toContain(DEMO_PASSWORD)
    for (const account of DEMO_ACCOUNTS) expect(DEMO).toContain(account.email.split('@')[0])
  })
})
