import { readFileSync } from 'node:fs'
import { join } from 'node:path'
import { deflateRawSync } from 'node:zlib'
import fc from 'fast-check'
import Papa from 'papaparse'
import { describe, expect, it } from 'vitest'
import { MAX_ALTERNATIVES } from '../../../shared/schemas/ledger'
import type { Alternative, Criterion } from '../../../shared/types/decision'
import { IMPORT_PROBLEM_CODES, MAX_UPLOAD_BYTES, type CsvDelimiter } from '../../../shared/types/ledgerImport'
import type { LedgerView } from '../../../shared/types/ledgerView'
import { analyseLedger, validateLedger } from '../../../shared/utils/ledger'
import { ledgerExportRows } from '../../../shared/utils/ledgerExport'
import { MAX_IMPORT_PROBLEMS_KEPT, MAX_XLSX_UNPACKED_BYTES, parseLedgerFile, readCellNumber, spreadsheetColumn, zipUnpacksWithin } from '../../../server/utils/ledgerImport'
import { GOOD_FILES, MALFORMED_FILES, generatedCsv, oversizedCsv } from '../../fixtures/uploads/expected'
import { KELDERWICK_ALTERNATIVES, KELDERWICK_CRITERIA } from '../../fixtures/uploads/kelderwick'

const FIXTURES = join(import.meta.dirname, '../../fixtures/uploads')
const fixture = (name: string) => readFileSync(join(FIXTURES, name))
const parse = (name: string, existing: Alternative[] = []) => parseLedgerFile({ filename: name, bytes: fixture(name) }, KELDERWICK_CRITERIA, existing)
const parseText = (text: string, criteria: Criterion[] = KELDERWICK_CRITERIA, existing: Alternative[] = []) =>
  parseLedgerFile({ filename: 'test.csv', bytes: Buffer.from(text) }, criteria, existing)
const withoutIds = (alternatives: Alternative[]) => alternatives.map(({ name, scores }) => ({ name, scores }))

describe('parseLedgerFile: the good files', () => {
  it.each([
    ['kelderwick.csv', 'csv', ',', '.'],
    ['kelderwick-bom.csv', 'csv', ',', '.'],
    ['kelderwick-semicolon.csv', 'csv', ';', ','],
    ['kelderwick-tab.csv', 'csv', '\t', '.'],
    ['kelderwick-quoted.csv', 'csv', ',', '.'],
    ['kelderwick-trailing.csv', 'csv', ',', '.'],
    ['kelderwick.xlsx', 'xlsx', undefined, undefined],
  ] as const)('%s gives the nine Kelderwick alternatives (%s, separator %j, decimal mark %j)', async (name, format, delimiter, decimalMark) => {
    const result = await parse(name)
    expect(result.problems).toEqual([])
    expect(result.problemTotal).toBe(0)
    expect(result.format).toBe(format)
    expect(result.delimiter).toBe(delimiter)
    expect(result.decimalMark).toBe(decimalMark)
    expect(result.rowCount).toBe(9)
    expect(withoutIds(result.alternatives)).toEqual(KELDERWICK_ALTERNATIVES)
    expect(result.columns.map(c => c.criterionId)).toEqual([null, ...KELDERWICK_CRITERIA.map(c => c.id)])
    expect(result.columns.map(c => c.letter)).toEqual(['A', 'B', 'C', 'D', 'E', 'F'])
    // What the parser hands over is a ledger the engine accepts.
    expect(validateLedger(KELDERWICK_CRITERIA, result.alternatives)).toEqual([])
  })

  it('covers every good file in the fixtures table', () => {
    expect(GOOD_FILES.length).toBe(7)
  })

  it('reads the first visible sheet of a workbook, a formula\'s saved result and a number stored as text', async () => {
    const result = await parse('kelderwick.xlsx')
    expect(result.sheet).toBe('Options')
    expect(result.mediaType).toBe('application/vnd.openxmlformats-officedocument.spreadsheetml.sheet')
    expect(result.alternatives.find(a => a.name === 'Tidal gate at Kelder mouth')!.scores.cost).toBe(26)
    expect(result.alternatives.find(a => a.name === 'Beach recharge, rock groynes')!.scores.amenity).toBe(7.5)
  })

  it('keeps a quoted header with a line break, a name with a line break, and square-bracketed units', async () => {
    const result = await parse('kelderwick-quoted.csv')
    expect(result.columns[1]!.header).toBe('Capital cost (£m)')
    expect(result.columns[3]!.header).toBe('Habitat affected [ha]')
    expect(result.alternatives[5]!.name).toBe('Tidal gate at Kelder mouth')
  })
})

describe('parseLedgerFile: one problem per malformed file', () => {
  it.each(MALFORMED_FILES.map(e => [e.file, e] as const))('%s', async (name, expected) => {
    const result = await parse(name)
    expect(result.problemTotal).toBe(1)
    const [problem] = result.problems
    expect({
      code: problem!.code,
      row: problem!.row,
      column: problem!.column,
      columnLetter: problem!.columnLetter,
      criterionId: problem!.criterionId,
    }).toEqual({ code: expected.code, row: expected.row, column: expected.column, columnLetter: expected.columnLetter, criterionId: expected.criterionId })
    // The message names the place first, as a spreadsheet would show it.
    if (expected.row !== undefined) expect(problem!.message).toMatch(new RegExp(`^Row ${expected.row}\\b`))
    if (expected.column !== undefined && expected.row !== undefined) expect(problem!.message).toContain(`column '${expected.column}'`)
    expect(problem!.message.endsWith('.')).toBe(true)
    expect(result.groups).toHaveLength(1)
    expect(result.groups[0]!.count).toBe(1)
    expect(result.groups[0]!.summary.length).toBeGreaterThan(20)
  })

  it('has at least twenty malformed files, and every code but three is exercised by one (those three are generated or need an empty room)', () => {
    expect(MALFORMED_FILES.length).toBeGreaterThanOrEqual(20)
    const covered = new Set(MALFORMED_FILES.map(e => e.code))
    expect(IMPORT_PROBLEM_CODES.filter(code => !covered.has(code))).toEqual(['file-too-large', 'no-criteria', 'too-many-rows'])
  })

  it('refuses a file over the size limit before reading it', async () => {
    const bytes = oversizedCsv(MAX_UPLOAD_BYTES)
    expect(bytes.length).toBeGreaterThan(MAX_UPLOAD_BYTES)
    const result = await parseLedgerFile({ filename: 'big.csv', bytes }, KELDERWICK_CRITERIA, [])
    expect(result.problems.map(p => p.code)).toEqual(['file-too-large'])
    expect(result.problems[0]!.message).toMatch(/5 MB/)
  })

  it('refuses more rows than a ledger holds, naming the first row over the limit', async () => {
    const result = await parseLedgerFile({ filename: 'many.csv', bytes: generatedCsv(MAX_ALTERNATIVES + 1) }, KELDERWICK_CRITERIA, [])
    expect(result.problems.map(p => p.code)).toEqual(['too-many-rows'])
    expect(result.problems[0]!.row).toBe(MAX_ALTERNATIVES + 2)
    expect(result.rowCount).toBe(MAX_ALTERNATIVES + 1)
  })

  it('accepts exactly the row limit', async () => {
    const result = await parseLedgerFile({ filename: 'limit.csv', bytes: generatedCsv(MAX_ALTERNATIVES) }, KELDERWICK_CRITERIA, [])
    expect(result.problems).toEqual([])
    expect(result.alternatives).toHaveLength(MAX_ALTERNATIVES)
  })

  it('says when the room has no criteria', async () => {
    const result = await parseLedgerFile({ filename: 'kelderwick.csv', bytes: fixture('kelderwick.csv') }, [], [])
    expect(result.problems.map(p => p.code)).toEqual(['no-criteria'])
  })

  it('refuses a workbook that would unpack to more than 100 MB without opening it', async () => {
    const bytes = Buffer.from(fixture('kelderwick.xlsx'))
    // Claim a huge unpacked size for the first entry of the central directory.
    const end = bytes.lastIndexOf(Buffer.from([0x50, 0x4b, 0x05, 0x06]))
    const directory = bytes.readUInt32LE(end + 16)
    bytes.writeUInt32LE(200 * 1024 * 1024, directory + 24)
    const result = await parseLedgerFile({ filename: 'bomb.xlsx', bytes }, KELDERWICK_CRITERIA, [])
    expect(result.problems.map(p => p.code)).toEqual(['xlsx-unreadable'])
    expect(result.problems[0]!.message).toMatch(/100 MB/)
  })
})

describe('zip bombs: sizes are checked by inflating, not believed', () => {
  /** A one-entry ZIP written by hand (APPNOTE 6.3.x layouts), whose directory claims `declared` bytes. */
  function zipOf(name: string, content: Buffer, declared = content.length) {
    const packed = deflateRawSync(content)
    const nameBytes = Buffer.from(name)
    const local = Buffer.alloc(30)
    local.writeUInt32LE(0x04034b50, 0)
    local.writeUInt16LE(20, 4)
    local.writeUInt16LE(8, 8)
    local.writeUInt32LE(packed.length, 18)
    local.writeUInt32LE(declared, 22)
    local.writeUInt16LE(nameBytes.length, 26)
    const central = Buffer.alloc(46)
    central.writeUInt32LE(0x02014b50, 0)
    central.writeUInt16LE(20, 4)
    central.writeUInt16LE(20, 6)
    central.writeUInt16LE(8, 10)
    central.writeUInt32LE(packed.length, 20)
    central.writeUInt32LE(declared, 24)
    central.writeUInt16LE(nameBytes.length, 28)
    central.writeUInt32LE(0, 42)
    const directoryAt = local.length + nameBytes.length + packed.length
    const directorySize = central.length + nameBytes.length
    const end = Buffer.alloc(22)
    end.writeUInt32LE(0x06054b50, 0)
    end.writeUInt16LE(1, 8)
    end.writeUInt16LE(1, 10)
    end.writeUInt32LE(directorySize, 12)
    end.writeUInt32LE(directoryAt, 16)
    return Buffer.concat([local, nameBytes, packed, central, nameBytes, end])
  }

  it('accepts an honest archive, and the real workbook fixture', async () => {
    expect(await zipUnpacksWithin(zipOf('xl/workbook.xml', Buffer.from('<workbook/>')), 1024)).toBe('ok')
    expect(await zipUnpacksWithin(fixture('kelderwick.xlsx'), MAX_XLSX_UNPACKED_BYTES)).toBe('ok')
  })

  it('stops inflating at the limit when an entry claims a few bytes and holds far more', async () => {
    const bomb = zipOf('xl/workbook.xml', Buffer.alloc(4 * 1024 * 1024), 10)
    expect(bomb.length).toBeLessThan(10_000) // a few kilobytes on the wire
    expect(await zipUnpacksWithin(bomb, 1024 * 1024)).toBe('too-large')
  })

  it('calls an archive damaged when an entry is not the size its directory claims', async () => {
    expect(await zipUnpacksWithin(zipOf('xl/workbook.xml', Buffer.from('<workbook/>'), 5), 1024)).toBe('damaged')
    const workbook = Buffer.from(fixture('kelderwick.xlsx'))
    const end = workbook.lastIndexOf(Buffer.from([0x50, 0x4b, 0x05, 0x06]))
    const first = workbook.readUInt32LE(end + 16)
    workbook.writeUInt32LE(workbook.readUInt32LE(first + 24) - 1, first + 24)
    const result = await parseLedgerFile({ filename: 'lying.xlsx', bytes: workbook }, KELDERWICK_CRITERIA, [])
    expect(result.problems.map(p => p.code)).toEqual(['xlsx-unreadable'])
    expect(result.problems[0]!.message).toMatch(/damaged or incomplete/)
  })

  // JSZip (inside exceljs) repairs layouts this check would read differently: it shifts every
  // offset when the directory does not end at the end record, and follows a ZIP64 record when a
  // field says 0xFFFFFFFF. Such files are refused, so both readers see the same directory.
  it('calls damaged a file whose directory does not end where the end record begins', async () => {
    const honest = zipOf('xl/workbook.xml', Buffer.from('<workbook/>'))
    const end = honest.length - 22
    const shifted = Buffer.concat([honest.subarray(0, end), Buffer.alloc(7), honest.subarray(end)])
    expect(await zipUnpacksWithin(honest, 1024)).toBe('ok')
    expect(await zipUnpacksWithin(shifted, 1024)).toBe('damaged')
  })

  it('calls damaged a file whose end record marks ZIP64', async () => {
    const marked = zipOf('xl/workbook.xml', Buffer.from('<workbook/>'))
    marked.writeUInt32LE(0xFFFFFFFF, marked.length - 22 + 12)
    expect(await zipUnpacksWithin(marked, 1024)).toBe('damaged')
    const result = await parseLedgerFile({ filename: 'zip64.xlsx', bytes: marked }, KELDERWICK_CRITERIA, [])
    expect(result.problems.map(p => p.code)).toEqual(['xlsx-unreadable'])
  })

  it('refuses, through the parser, a workbook part that claims 10 bytes and inflates past 100 MB', async () => {
    const bomb = zipOf('xl/workbook.xml', Buffer.alloc(MAX_XLSX_UNPACKED_BYTES + 1024), 10)
    expect(bomb.length).toBeLessThan(MAX_UPLOAD_BYTES)
    const result = await parseLedgerFile({ filename: 'bomb.xlsx', bytes: bomb }, KELDERWICK_CRITERIA, [])
    expect(result.problems.map(p => p.code)).toEqual(['xlsx-unreadable'])
    expect(result.problems[0]!.message).toMatch(/100 MB/)
  })
})

describe('parseLedgerFile: several problems', () => {
  const header = 'Scheme,Capital cost,Homes protected,Habitat affected,Years to build,Amenity score'

  it('lists every problem, in reading order, with one group per kind and column', async () => {
    const result = await parseText([
      header,
      'Wall,1,2,,4,5',
      'Groyne,1,2,n/a,4,5',
      ',1,2,,4,5',
      'wall,1,2,3,4,5',
    ].join('\n'))
    expect(result.problems.map(p => [p.code, p.row, p.columnLetter])).toEqual([
      ['score-missing', 2, 'D'],
      ['score-not-a-number', 3, 'D'],
      ['name-empty', 4, 'A'],
      ['score-missing', 4, 'D'],
      ['name-duplicate', 5, 'A'],
    ])
    const missing = result.groups.find(g => g.code === 'score-missing')!
    expect(missing).toMatchObject({ count: 2, rows: [2, 4], column: 'Habitat affected', criterionId: 'habitat' })
    expect(missing.summary).toBe('2 rows need a number in Habitat affected — fill them in the file and upload it again.')
    expect(result.problems[4]!.message).toBe('Row 5, column \'Scheme\': \'wall\' is already the name in row 2. Give each alternative its own name.')
  })

  it('counts all problems but keeps a bounded list; groups count them all', async () => {
    const rows = Array.from({ length: 3000 }, (_, i) => `Scheme ${i},x,1,1,1,1`)
    const result = await parseText([header, ...rows].join('\n'))
    expect(result.problemTotal).toBe(3000)
    expect(result.problems).toHaveLength(MAX_IMPORT_PROBLEMS_KEPT)
    expect(result.groups).toEqual([expect.objectContaining({ code: 'score-not-a-number', count: 3000 })])
    expect(result.groups[0]!.rows).toHaveLength(20)
    expect(result.groups[0]!.summary).toMatch(/^3,000 cells in Capital cost are not a number/)
  })

  it('numbers rows as a spreadsheet does: blank lines count, the header is the first non-empty row', async () => {
    const result = await parseText(`\n\n${header}\nWall,1,2,3,4,x\n`)
    expect(result.problems.map(p => [p.code, p.row])).toEqual([['score-not-a-number', 4]])
  })

  it('ignores a column with neither header nor values (trailing separators), but not one with values', async () => {
    expect((await parseText(`${header},,\nWall,1,2,3,4,5,,\n`)).problems).toEqual([])
    expect((await parseText(`${header},\nWall,1,2,3,4,5,x\n`)).problems.map(p => p.code)).toEqual(['column-header-empty'])
  })

  it('does not report missing scores beyond the end of a short row, only the short row', async () => {
    const result = await parseText(`${header}\nWall,1,2\n`)
    expect(result.problems.map(p => p.code)).toEqual(['row-too-short'])
  })
})

describe('parseLedgerFile: columns', () => {
  const criteria: Criterion[] = [
    { id: 'cost', name: 'Capital cost', unit: '£m', direction: 'min' },
    { id: 'score', name: 'Score', unit: '', direction: 'max' },
  ]

  it.each([
    ['Capital cost', true],
    ['  CAPITAL   cost ', true],
    ['Capital cost (£m)', true],
    ['Capital cost [ £ m ]', true],
    ['Capital cost(£m)', true],
    ['Capital cost (£k)', false],
    ['Capital cost (£M)', false],
    ['Capital costs', false],
  ])('header %j matches Capital cost (£m): %s', async (heading, ok) => {
    const result = await parseText(`Option,${heading},Score (points)\nA,1,2\n`, criteria)
    expect(result.problems.length === 0).toBe(ok)
    if (ok) expect(result.alternatives[0]!.scores).toEqual({ cost: 1, score: 2 })
  })

  it('accepts any unit after a criterion that has none', async () => {
    expect((await parseText('Option,Capital cost,Score (out of 10)\nA,1,2\n', criteria)).problems).toEqual([])
  })

  it('picks the separator whose header matches the criteria, even when names are full of other separators', async () => {
    const names = ['Plan A; wide; tall; long', 'Plan B; wide; tall; short', 'Plan C; narrow; tall; long']
    const text = ['Option,Capital cost,Score', ...names.map((n, i) => `${n},${i + 1},${i}`)].join('\n')
    const result = await parseText(text, criteria)
    expect(result.delimiter).toBe(',')
    expect(result.alternatives.map(a => a.name)).toEqual(names)
  })

  it('reads back names that our CSV export protected with an apostrophe (shared/utils/csvSafe.ts)', async () => {
    const result = await parseText('Option,Capital cost,Score\n\'=SUM(A1),1,2\n\'-3 metre wall,1,2\n\'Tis the season,1,2\n', criteria)
    expect(result.alternatives.map(a => a.name)).toEqual(['=SUM(A1)', '-3 metre wall', '\'Tis the season'])
  })

  it('gives column letters past Z as a spreadsheet does', () => {
    expect([0, 25, 26, 27, 51, 52, 701, 702].map(spreadsheetColumn)).toEqual(['A', 'Z', 'AA', 'AB', 'AZ', 'BA', 'ZZ', 'AAA'])
  })
})

describe('parseLedgerFile: identities', () => {
  it('keeps the id of an alternative whose name matches one in the ledger (ignoring case), and lists the ones the file drops', async () => {
    const existing: Alternative[] = [
      { id: 'a-wall', name: 'RAISED PROMENADE WALL', scores: {} },
      { id: 'a-dune', name: 'Dune restoration', scores: {} },
      { id: 'a-pier', name: 'Pier extension', scores: {} },
    ]
    const result = await parse('kelderwick.csv', existing)
    expect(result.alternatives[0]).toMatchObject({ id: 'a-wall', name: 'Raised promenade wall' })
    expect(result.alternatives.find(a => a.name === 'Dune restoration')!.id).toBe('a-dune')
    expect(result.kept).toBe(2)
    expect(result.removed).toEqual(['Pier extension'])
    const fresh = result.alternatives.filter(a => !['a-wall', 'a-dune'].includes(a.id)).map(a => a.id)
    expect(fresh).toHaveLength(7)
    expect(new Set(fresh).size).toBe(7)
    for (const id of fresh) expect(id).toMatch(/^a-[0-9a-f]{12}$/)
  })
})

describe('readCellNumber', () => {
  it.each([
    ['12', '.', 12],
    ['  -3.5 ', '.', -3.5],
    ['\u22123', '.', -3],
    ['+2', '.', 2],
    ['.5', '.', 0.5],
    ['1.5E+21', '.', 1.5e21],
    ['1e-7', '.', 1e-7],
    ['1,234.5', '.', 1234.5],
    ['12,000', '.', 12000],
    ['1 234.5', '.', 1234.5],
    ['1.234', '.', 1.234],
    ['12,5', ',', 12.5],
    ['1.234,5', ',', 1234.5],
    ['1.234', ',', 1234],
    ['12\u00a0500,25', ',', 12500.25],
    ['1,5E+3', ',', 1500],
  ] as const)('%j with decimal mark %j is %d', (text, mark, value) => {
    expect(readCellNumber(text, mark)).toEqual({ value })
  })

  it.each([
    ['', '.', 'score-missing'],
    ['   ', '.', 'score-missing'],
    ['n/a', '.', 'score-not-a-number'],
    ['£14.2m', '.', 'score-not-a-number'],
    ['45%', '.', 'score-not-a-number'],
    ['(12)', '.', 'score-not-a-number'],
    ['Infinity', '.', 'score-not-finite'],
    ['-inf', '.', 'score-not-finite'],
    ['NaN', ',', 'score-not-finite'],
    ['1e400', '.', 'score-not-finite'],
    ['#DIV/0!', '.', 'cell-error'],
    ['#N/A', ',', 'cell-error'],
    ['12,5', '.', 'number-ambiguous'],
    ['1,23', '.', 'number-ambiguous'],
    ['1,234,5', '.', 'number-ambiguous'],
    ['1.234,5', '.', 'number-ambiguous'],
    ['2.5', ',', 'number-ambiguous'],
    ['1,234.5', ',', 'number-ambiguous'],
    ['1.2.3', '.', 'number-ambiguous'],
    ['1 23', '.', 'number-ambiguous'],
  ] as const)('%j with decimal mark %j is refused as %s', (text, mark, code) => {
    expect(readCellNumber(text, mark)).toMatchObject({ code })
  })

  it('reads a semicolon file without any comma with the decimal point (the documented rule)', async () => {
    const result = await parseText('Scheme;Capital cost;Homes protected;Habitat affected;Years to build;Amenity score\nWall;1.240;2;3;4;5\n')
    expect(result.decimalMark).toBe('.')
    expect(result.alternatives[0]!.scores.cost).toBe(1.24)
  })

  it('reads a semicolon file with one decimal comma with the decimal comma throughout', async () => {
    const result = await parseText('Scheme;Capital cost;Homes protected;Habitat affected;Years to build;Amenity score\nWall;1.240;2;3;4;5\nDune;1;2;3;4;0,5\n')
    expect(result.decimalMark).toBe(',')
    expect(result.alternatives.map(a => [a.scores.cost, a.scores.amenity])).toEqual([[1240, 5], [1, 0.5]])
  })
})

describe('parseLedgerFile: laws', () => {
  const criteria: Criterion[] = ['North', 'South', 'East'].map((name, k) => ({ id: `c${k}`, name, unit: k === 0 ? 'kg' : '', direction: 'min' as const }))
  const number = fc.double({ noNaN: true, noDefaultInfinity: true }).map(x => (Object.is(x, -0) ? 0 : x))
  const name = fc.string({ unit: 'grapheme', minLength: 1, maxLength: 24 })
    .map(s => s.replace(/[\p{Cc}\u2028\u2029\ufeff]/gu, '').normalize('NFC').replace(/\s+/g, ' ').trim())
    // A leading apostrophe before = + - @ is dropped on purpose (see the parser's header comment).
    .filter(s => s !== '' && !/^'[=+\-@]/.test(s))
  const ledger = fc.uniqueArray(fc.tuple(name, number, number, number), { minLength: 1, maxLength: 30, selector: ([n]) => n.toLocaleLowerCase('en') })

  // Round trip through papaparse's own writer (papaparse.com, `Papa.unparse`), as another tool would write the file.
  it.each<[CsvDelimiter, boolean]>([[',', false], [';', true], [';', false], ['\t', true], ['\t', false]])(
    'a ledger written by Papa.unparse with separator %j (decimal comma: %s) reads back with the same names and numbers',
    async (delimiter, decimalComma) => {
      await fc.assert(fc.asyncProperty(ledger, async (rows) => {
        const table = [
          ['Alternative', 'North (kg)', 'South', 'East'],
          ...rows.map(([n, ...xs]) => [n, ...xs.map(x => (decimalComma ? String(x).replace('.', ',') : String(x)))]),
        ]
        const text = Papa.unparse(table, { delimiter, newline: '\r\n' })
        const result = await parseText(text, criteria)
        expect(result.problems).toEqual([])
        expect(result.alternatives.map(a => [a.name, a.scores.c0, a.scores.c1, a.scores.c2])).toEqual(rows)
      }), { numRuns: 150 })
    },
  )

  it('never throws, whatever the bytes', async () => {
    const good = fixture('kelderwick.csv')
    const mutated = fc.tuple(fc.nat({ max: good.length - 1 }), fc.uint8Array({ minLength: 1, maxLength: 8 }))
      .map(([at, bytes]) => Buffer.concat([good.subarray(0, at), Buffer.from(bytes), good.subarray(at + bytes.length)]))
    const anyBytes = fc.uint8Array({ maxLength: 600 }).map(b => Buffer.from(b))
    await fc.assert(fc.asyncProperty(fc.oneof(mutated, anyBytes), async (bytes) => {
      const result = await parseLedgerFile({ filename: 'fuzz.csv', bytes }, KELDERWICK_CRITERIA, [])
      expect(result.problemTotal).toBe(result.problems.length)
      if (result.problemTotal === 0) expect(validateLedger(KELDERWICK_CRITERIA, result.alternatives)).toEqual([])
    }), { numRuns: 300 })
  })
})

describe('parseLedgerFile: our own CSV export uploads again', () => {
  /** The export as the route writes it (export.csv.get.ts): BOM, every cell quoted, CRLF. */
  function exported(criteria: Criterion[], alternatives: Alternative[]) {
    const analysis = analyseLedger(criteria, alternatives)
    const view: LedgerView = {
      version: { number: 1, hash: 'x'.repeat(64), shortHash: 'xxxxxxxx', note: '', createdAt: new Date(0), attachmentId: null },
      criteria,
      alternatives,
      analysis: { verdicts: analysis.alternatives, counts: analysis.counts, efficientIds: analysis.efficientIds, ideal: analysis.ideal, nadir: analysis.nadir },
    }
    return `\uFEFF${Papa.unparse(ledgerExportRows(view), { quotes: true })}\r\n`
  }

  it('reads the Kelderwick export back to the same alternatives, leaving out the verdict columns', async () => {
    const alternatives = KELDERWICK_ALTERNATIVES.map((a, i) => ({ id: `a${i}`, ...a }))
    const text = exported(KELDERWICK_CRITERIA, alternatives)
    expect(text).toContain('"Status","Reason","Weighted sum can favour it"')
    const result = await parseText(text)
    expect(result.problems).toEqual([])
    expect(withoutIds(result.alternatives)).toEqual(KELDERWICK_ALTERNATIVES)
    const ignored = result.columns.filter(c => c.ignored)
    expect(ignored.map(c => [c.letter, c.header])).toEqual([['G', 'Status'], ['H', 'Reason'], ['I', 'Weighted sum can favour it']])
  })

  it('gets back a name the export had to neutralise as a formula', async () => {
    const alternatives = KELDERWICK_ALTERNATIVES.map((a, i) => ({ id: `a${i}`, ...a, name: i === 0 ? '=SUM(1,2) scheme' : a.name }))
    const text = exported(KELDERWICK_CRITERIA, alternatives)
    expect(text).toContain('"\'=SUM(1,2) scheme"')
    const result = await parseText(text)
    expect(result.problems).toEqual([])
    expect(result.alternatives[0]!.name).toBe('=SUM(1,2) scheme')
  })

  it('still treats a criterion that happens to be called Status as a criterion', async () => {
    const criteria: Criterion[] = [{ id: 'cost', name: 'Cost', unit: '£m', direction: 'min' }, { id: 'status', name: 'Status', unit: '', direction: 'max' }]
    const result = await parseText('Name,Cost (£m),Status\nA,1,2\nB,2,3\n', criteria)
    expect(result.problems).toEqual([])
    expect(result.columns.map(c => c.criterionId)).toEqual([null, 'cost', 'status'])
    expect(result.alternatives.map(a => a.scores)).toEqual([{ cost: 1, status: 2 }, { cost: 2, status: 3 }])
  })
})
