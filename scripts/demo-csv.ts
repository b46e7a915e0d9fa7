/**
 * The example file for facilitators, public/kelderwick-demo.csv: the demo ledger's twelve schemes
 * (server/database/demo.ts) as a CSV that uploads cleanly into a room with the demo criteria.
 * Headers are "Name (unit)" as the upload expects; numbers have each criterion's decimals.
 *
 * After changing the demo ledger, write the file again with `npx tsx scripts/demo-csv.ts`;
 * tests/unit/scripts/demoCsv.test.ts fails while the committed file and demo.ts disagree.
 */
import { writeFileSync } from 'node:fs'
import Papa from 'papaparse'
import { DEMO_ALTERNATIVES, DEMO_CRITERIA } from '../server/database/demo'

/** Where the app serves it from: /kelderwick-demo.csv. */
export const DEMO_CSV_PATH = new URL('../public/kelderwick-demo.csv', import.meta.url)

export function demoCsv(): string {
  const header = ['Scheme', ...DEMO_CRITERIA.map(c => (c.unit ? `${c.name} (${c.unit})` : c.name))]
  const rows = DEMO_ALTERNATIVES.map(a => [
    a.name,
    ...DEMO_CRITERIA.map((c) => {
      const score = a.scores[c.id]!
      return c.precision == null ? String(score) : score.toFixed(c.precision)
    }),
  ])
  // The byte-order mark lets spreadsheets open it as UTF-8 (the £ in the headers survives).
  return `\uFEFF${Papa.unparse([header, ...rows], { newline: '\r\n' })}\r\n`
}

if (import.meta.url === `file://${process.argv[1]}`) {
  writeFileSync(DEMO_CSV_PATH, demoCsv())
  console.log(`[counterpoise] wrote ${DEMO_CSV_PATH.pathname}`)
}
