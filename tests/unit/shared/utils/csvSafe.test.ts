/**
 * Cells for CSV files that spreadsheets open (shared/utils/csvSafe.ts). The characters that start a
 * formula, and the tab and carriage return that some spreadsheets strip before looking, are those
 * OWASP's "CSV Injection" page lists (=, +, -, @, tab, carriage return). The written file is read
 * back with papaparse, a general-purpose CSV parser, to check what a spreadsheet would be given.
 */
import Papa from 'papaparse'
import { describe, expect, it } from 'vitest'
import { csvCell } from '../../../../shared/utils/csvSafe'

describe('csvCell', () => {
  it.each([
    ['=HYPERLINK("http://x.example","click")', '\'=HYPERLINK("http://x.example","click")'],
    ['+1+2', '\'+1+2'],
    ['-2+3', '\'-2+3'],
    ['@SUM(A1)', '\'@SUM(A1)'],
    ['\t=1+1', '\'\t=1+1'],
    ['\r=1+1', '\'\r=1+1'],
  ])('puts an apostrophe before text that a spreadsheet would run: %j', (text, cell) => {
    expect(csvCell(text)).toBe(cell)
  })

  it.each([
    ['Rock revetment', 'Rock revetment'],
    ['a=b', 'a=b'],
    [' =1', ' =1'],
    ['', ''],
  ])('leaves other text as it is: %j', (text, cell) => {
    expect(csvCell(text)).toBe(cell)
  })

  it('writes numbers as numbers (minus three stays a number), and drops what is not finite', () => {
    expect(csvCell(-3)).toBe('-3')
    expect(csvCell(0.1)).toBe('0.1')
    expect(csvCell(1e21)).toBe('1e+21')
    expect(csvCell(Number.NaN)).toBe('')
    expect(csvCell(Infinity)).toBe('')
    expect(csvCell(null)).toBe('')
    expect(csvCell(undefined)).toBe('')
    expect(csvCell(true)).toBe('yes')
    expect(csvCell(false)).toBe('no')
  })

  it('survives quoting: a parsed file gives back exactly the neutralised cells', () => {
    const row = ['=cmd|\' /C calc\'!A0', 'say "hi", then, go', '-3', 'line\nbreak', '@x'].map(csvCell)
    const text = Papa.unparse([row], { quotes: true })
    const [parsed] = Papa.parse<string[]>(text).data
    expect(parsed).toEqual(row)
    for (const cell of parsed!) expect(cell).not.toMatch(/^[=+@\t\r]/)
    expect(parsed![2]).toBe('\'-3') // the text "-3" (not the number) is neutralised like any text
  })
})
