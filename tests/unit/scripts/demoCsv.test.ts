import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { DEMO_ALTERNATIVES, DEMO_CRITERIA } from '../../../server/database/demo'
import { parseLedgerFile } from '../../../server/utils/ledgerImport'
import { DEMO_CSV_PATH, demoCsv } from '../../../scripts/demo-csv'

/** public/kelderwick-demo.csv, the example file the upload card links to. */
const committed = () => readFileSync(DEMO_CSV_PATH)

describe('the example file public/kelderwick-demo.csv', () => {
  it('is what scripts/demo-csv.ts writes from the demo ledger today (run it again after changing demo.ts)', () => {
    expect(committed().toString('utf8')).toBe(demoCsv())
  })

  it('uploads cleanly into a room with the demo criteria and gives exactly the demo alternatives', async () => {
    // Read by the upload's own parser; names matching the ledger keep their ids, so with the demo
    // alternatives as the current ledger the result must be the demo ledger itself.
    const result = await parseLedgerFile({ filename: 'kelderwick-demo.csv', bytes: committed() }, DEMO_CRITERIA, DEMO_ALTERNATIVES)
    expect(result.problems).toEqual([])
    expect(result.problemTotal).toBe(0)
    expect(result.format).toBe('csv')
    expect(result.rowCount).toBe(DEMO_ALTERNATIVES.length)
    expect(result.columns.map(c => c.criterionId)).toEqual([null, ...DEMO_CRITERIA.map(c => c.id)])
    expect(result.alternatives).toEqual(DEMO_ALTERNATIVES)
    expect(result.kept).toBe(DEMO_ALTERNATIVES.length)
    expect(result.removed).toEqual([])
  })

  it('heads each column with the criterion and its unit, as the template does', () => {
    const header = committed().toString('utf8').replace(/^\uFEFF/, '').split('\r\n')[0]
    expect(header).toBe('Scheme,Capital cost (£m),Annual upkeep (£k/yr),Homes protected (homes),Residual flood risk (% per year),Habitat affected (ha),Construction time (months)')
  })
})
