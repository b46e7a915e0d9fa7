/**
 * Reading a room's alternatives from an uploaded CSV or XLSX file, listing every problem by row and
 * column. `parseLedgerFile` never throws for anything in the user's file: each fault becomes an
 * ImportProblem (codes in shared/types/ledgerImport.ts), and the route saves nothing unless there
 * are none.
 *
 * The rules, as a facilitator would meet them:
 *
 * Type, by content (the file name's extension is not trusted):
 * - XLSX: starts with the ZIP signature and its central directory lists xl/workbook.xml. Other ZIPs
 *   (.ods, .docx) and known signatures (PDF, PNG, JPEG, GIF, old .xls, gzip) are named and refused.
 *   A workbook that would unpack to more than 100 MB is refused unread.
 * - CSV: UTF-8 text, with or without a byte-order mark, without NUL bytes. Text in another encoding
 *   (Latin-1, Windows-1252, UTF-16) is refused with the row of the first odd character: we do not
 *   guess encodings, since a wrong guess changes names silently.
 * - Size: at most MAX_UPLOAD_BYTES (5 MB); at most MAX_ALTERNATIVES rows of alternatives.
 *
 * Layout:
 * - The first non-empty row is the header. Row numbers are those a spreadsheet shows: the first
 *   line of the file is row 1, and a quoted cell with line breaks inside stays one row.
 * - Column A holds the alternatives' names, whatever its header says. Names are trimmed and runs of
 *   spaces or line breaks inside them become one space; any other control character is refused
 *   (the same rule as the ledger form's, shared/schemas/text.ts). Names must be unique, ignoring case.
 *   In names and headers, an apostrophe before a leading =, +, - or @ is dropped: our CSV export
 *   adds it so spreadsheets do not run the text as a formula, and the file should read back as it
 *   was written (so a name that really begins with '- loses its apostrophe).
 * - Every other column is matched to a criterion by name, ignoring case and surrounding spaces,
 *   optionally followed by the unit in brackets: "Capital cost (£m)" or "Capital cost [£m]" matches
 *   the criterion "Capital cost". When a unit is given it must be the criterion's unit (spaces
 *   ignored, case kept, since mW is not MW): otherwise the numbers are probably in another unit.
 * - The verdict columns of our own CSV export (Status, Reason, Weighted sum can favour it) are read
 *   past when no criterion has that name, so an exported file uploads again unchanged.
 * - Columns that match no criterion, a criterion matched twice and a criterion with no column are
 *   problems. A column with neither header nor values (trailing separators) is ignored.
 * - Rows that are entirely empty are ignored wherever they are (trailing rows included).
 * - In a CSV, a row with more cells than the header (and something in them) or fewer cells than the
 *   header is a problem: the values may have shifted between columns.
 *
 * CSV separators: comma, semicolon or tab. Papaparse's detection makes a first guess; then the
 * separator whose header row matches the most criteria wins (the guess breaks ties), so a comma
 * inside names cannot mislead it.
 *
 * Numbers (one rule per file, stated so that no value is read two ways):
 * - Comma-separated files use the decimal point. A comma inside a (quoted) number is accepted only
 *   as a thousands separator in groups of three: "1,234.5" is 1234.5; "12,5" is refused as
 *   ambiguous (it could be 12.5 or 125).
 * - Semicolon- and tab-separated files use the decimal comma if any score cell in the file has a
 *   comma, and the decimal point otherwise. With the decimal comma, a point is accepted only as a
 *   thousands separator in groups of three: "1.234,5" and "1.234" are 1234.5 and 1234, while "2.5"
 *   is refused as ambiguous. With the decimal point, "1.234" is 1.234 (the preview shows it).
 * - Spaces (also no-break spaces) may separate thousands in groups of three: "12 500,5".
 * - Accepted too: a leading + or −, exponents ("1.5E+21", as spreadsheets write large numbers),
 *   ".5". Refused: empty cells, words, units or % signs in the cell, Infinity/NaN, spreadsheet
 *   error values (#DIV/0!), and numbers too large for a double.
 * - XLSX cells keep their stored numbers. Text cells are read with the decimal point; a formula
 *   uses its saved result, and a formula with no saved result is a problem, as are error values,
 *   dates and TRUE/FALSE in score columns. The first visible worksheet with content is read.
 *
 * Alternatives whose name matches one in the current ledger (ignoring case) keep its id; new ones
 * get `a-` and 12 random hex digits.
 */
import { randomBytes } from 'node:crypto'
import { promisify } from 'node:util'
import { inflateRaw } from 'node:zlib'
import type * as ExcelJS from 'exceljs'
// The self-contained build of exceljs, not its main entry: traced on Node 20, the main entry's
// dependencies (get-intrinsic → async-function) reach .output without their `module-sync` files
// and the built server cannot start (nitrojs/nitro#4468, vercel/nft#603). Same API, no dependencies.
// @ts-expect-error the bundle ships no typings of its own; they are those of 'exceljs'
import ExcelJSBundle from 'exceljs/dist/exceljs.bare.min.js'
import { createError, getRequestHeader, readMultipartFormData, type H3Event } from 'h3'
import Papa from 'papaparse'
import { z } from 'zod'
import { MAX_ALTERNATIVES } from '../../shared/schemas/ledger'
import { forbiddenAt, SINGLE_LINE_FORBIDDEN } from '../../shared/schemas/text'
import { EXPORT_VERDICT_HEADERS } from '../../shared/utils/ledgerExport'
import type { Alternative, Criterion } from '../../shared/types/decision'
import {
  CSV_DELIMITERS,
  IMPORT_PROBLEM_CODES,
  LEDGER_IMPORT_MODES,
  MAX_UPLOAD_BYTES,
  type CsvDelimiter,
  type ImportColumn,
  type ImportProblem,
  type ImportProblemCode,
  type ImportProblemGroup,
  type LedgerImportFormat,
  type LedgerImportMode,
} from '../../shared/types/ledgerImport'

/** Alternative names longer than this are refused (the same limit as AlternativeInput in shared/schemas/ledger.ts). */
export const MAX_IMPORT_NAME_LENGTH = 120
/** A workbook whose parts unpack to more than this is refused before it is opened (a "zip bomb" guard). */
export const MAX_XLSX_UNPACKED_BYTES = 100 * 1024 * 1024
/** Problems kept in the list; all of them are still counted, and grouped for the summary. */
export const MAX_IMPORT_PROBLEMS_KEPT = 2000

export interface LedgerImportFile {
  filename: string
  bytes: Buffer
}

export interface LedgerImport {
  format: LedgerImportFormat | null
  mediaType: string
  delimiter?: CsvDelimiter
  decimalMark?: '.' | ','
  sheet?: string
  columns: ImportColumn[]
  /** In file order. Only complete when `problems` is empty; otherwise rows keep the scores that could be read. */
  alternatives: Alternative[]
  /** The spreadsheet row of each alternative. */
  rows: number[]
  /** Rows of alternatives in the file (non-empty rows below the header). */
  rowCount: number
  kept: number
  removed: string[]
  problems: ImportProblem[]
  problemTotal: number
  groups: ImportProblemGroup[]
}

export const XLSX_MEDIA_TYPE = 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet'
const CSV_MEDIA_TYPE = 'text/csv'

// ───────────────────────────── cells and grids ─────────────────────────────

type Cell
  = | { kind: 'empty' }
    | { kind: 'text', text: string }
    | { kind: 'number', value: number }
    | { kind: 'error', text: string }
    | { kind: 'formula', formula: string }
    | { kind: 'other', text: string, what: string }

interface GridRow {
  /** As a spreadsheet numbers it (1-based). */
  row: number
  cells: Cell[]
}

interface Grid {
  /** Non-empty rows only, in order; the first is the header. */
  rows: GridRow[]
  /** CSV rows have a length that matters (shifted values); XLSX rows do not. */
  strictWidth: boolean
  decimalMark: '.' | ','
  /** In a CSV only: whether the decimal mark follows from the file (semicolon or tab files). */
  detectMark: boolean
}

const EMPTY: Cell = { kind: 'empty' }

function isEmpty(cell: Cell | undefined): boolean {
  return cell === undefined || cell.kind === 'empty' || (cell.kind === 'text' && cell.text.trim() === '')
}

/** A1-style column letters: 0 → A, 25 → Z, 26 → AA. */
export function spreadsheetColumn(index: number): string {
  let letters = ''
  for (let n = index + 1; n > 0; n = Math.floor((n - 1) / 26)) letters = String.fromCharCode(65 + ((n - 1) % 26)) + letters
  return letters
}

/**
 * Runs of spaces and line breaks become one space; the ends are trimmed. A leading apostrophe
 * before =, +, - or @ is dropped: it is how our own CSV export (shared/utils/csvSafe.ts) keeps
 * spreadsheets from running such text as a formula, so an exported file reads back unchanged.
 */
function tidy(text: string): string {
  return text.normalize('NFC').replace(/\s+/g, ' ').trim().replace(/^'(?=[=+\-@])/, '')
}

/** Names and headers compare ignoring case, Unicode form, and spacing. */
function nameKey(text: string): string {
  return tidy(text).toLocaleLowerCase('en')
}

function shorten(text: string, max = 60): string {
  const flat = text.replace(/\s+/g, ' ')
  return flat.length > max ? `${flat.slice(0, max - 1)}…` : flat
}

function cellText(cell: Cell): string {
  switch (cell.kind) {
    case 'empty': return ''
    case 'text': return cell.text
    case 'number': return String(cell.value)
    case 'error': return cell.text
    case 'formula': return `=${cell.formula}`
    case 'other': return cell.text
  }
}

// ───────────────────────────── problems ─────────────────────────────

interface Where {
  row?: number
  column?: string
  columnLetter?: string
  criterionId?: string
  value?: string
}

class Problems {
  readonly list: ImportProblem[] = []
  total = 0
  private readonly groups = new Map<string, ImportProblemGroup>()

  add(code: ImportProblemCode, detail: string, where: Where = {}) {
    this.total++
    const prefix = locationOf(where)
    const message = prefix ? `${prefix}: ${lowerFirst(detail)}` : detail
    const problem: ImportProblem = { code, message, detail, ...definedOnly(where) }
    if (this.list.length < MAX_IMPORT_PROBLEMS_KEPT) this.list.push(problem)
    // Cell and row problems group by column; file and header problems stay one per group.
    const perCell = CELL_SUMMARIES[code] !== undefined
    const key = perCell ? `${code}|${where.columnLetter ?? ''}` : `${code}|${this.total}`
    const group = this.groups.get(key)
    if (group) {
      group.count++
      if (where.row !== undefined && group.rows.length < 20) group.rows.push(where.row)
    }
    else {
      this.groups.set(key, {
        code,
        ...definedOnly({ column: where.column, columnLetter: where.columnLetter, criterionId: where.criterionId }),
        count: 1,
        rows: where.row !== undefined ? [where.row] : [],
        summary: perCell ? '' : message,
      })
    }
  }

  /** Groups in the order of IMPORT_PROBLEM_CODES, then by column; counted over every problem. */
  summarised(): ImportProblemGroup[] {
    const order = (code: ImportProblemCode) => IMPORT_PROBLEM_CODES.indexOf(code)
    return [...this.groups.values()]
      .map(group => ({ ...group, summary: group.summary || CELL_SUMMARIES[group.code]!(group.count, group.column ?? 'the names') }))
      .sort((a, b) => order(a.code) - order(b.code) || (a.columnLetter ?? '').length - (b.columnLetter ?? '').length || (a.columnLetter ?? '').localeCompare(b.columnLetter ?? ''))
  }
}

/** "Row 7, column 'Habitat affected'", "Row 7, column H", "Column C 'Notes'", "Row 7" or nothing. */
function locationOf({ row, column, columnLetter }: Where): string {
  const columnPart = column !== undefined ? `'${column}'` : columnLetter
  if (row !== undefined) return columnPart !== undefined ? `Row ${row}, column ${columnPart}` : `Row ${row}`
  if (column !== undefined) return columnLetter ? `Column ${columnLetter} '${column}'` : `Column '${column}'`
  return columnLetter ? `Column ${columnLetter}` : ''
}

function lowerFirst(text: string): string {
  return /^[A-Z](?:[a-z\s]|$)/.test(text) ? text[0]!.toLowerCase() + text.slice(1) : text
}

function definedOnly<T extends object>(value: T): Partial<T> {
  return Object.fromEntries(Object.entries(value).filter(([, v]) => v !== undefined)) as Partial<T>
}

const plural = (n: number, one: string, many: string) => `${n.toLocaleString('en-GB')} ${n === 1 ? one : many}`

/** What a group of cell or row problems says, for a count in one column. */
const CELL_SUMMARIES: Partial<Record<ImportProblemCode, (n: number, column: string) => string>> = {
  'score-missing': (n, c) => `${plural(n, 'row needs', 'rows need')} a number in ${c} — fill ${n === 1 ? 'it' : 'them'} in the file and upload it again.`,
  'score-not-a-number': (n, c) => `${plural(n, 'cell', 'cells')} in ${c} ${n === 1 ? 'is' : 'are'} not a number — write plain numbers there, with the unit only in the header.`,
  'score-not-finite': (n, c) => `${plural(n, 'cell', 'cells')} in ${c} ${n === 1 ? 'says' : 'say'} Infinity or NaN — enter finite numbers.`,
  'number-ambiguous': (n, c) => `${plural(n, 'number', 'numbers')} in ${c} could be read two ways — write ${n === 1 ? 'it' : 'them'} without thousands separators, with the file's decimal mark.`,
  'formula-no-result': (n, c) => `${plural(n, 'formula', 'formulas')} in ${c} ${n === 1 ? 'has' : 'have'} no saved result — open the workbook, let it recalculate, save it and upload it again.`,
  'cell-error': (n, c) => `${plural(n, 'cell', 'cells')} in ${c} ${n === 1 ? 'holds' : 'hold'} a spreadsheet error such as #DIV/0! — correct the formulas in the workbook.`,
  'name-empty': n => `${plural(n, 'row has', 'rows have')} no name in column A — name every alternative, or delete rows that are not alternatives.`,
  'name-too-long': n => `${plural(n, 'name is', 'names are')} longer than ${MAX_IMPORT_NAME_LENGTH} characters — shorten ${n === 1 ? 'it' : 'them'} in the file.`,
  'name-control-character': n => `${plural(n, 'name holds', 'names hold')} a control character (such as a NUL or a bell) — delete ${n === 1 ? 'it' : 'them'} in the file.`,
  'name-duplicate': n => `${plural(n, 'name repeats', 'names repeat')} an earlier row — give each alternative its own name.`,
  'row-too-long': n => `${plural(n, 'row has', 'rows have')} more cells than the header — values may have shifted; check ${n === 1 ? 'it' : 'them'} in the file.`,
  'row-too-short': n => `${plural(n, 'row has', 'rows have')} fewer cells than the header — values may have shifted; check ${n === 1 ? 'it' : 'them'} in the file.`,
}

// ───────────────────────────── numbers ─────────────────────────────

type NumberReading = { value: number } | { code: ImportProblemCode, detail: string }

const SPREADSHEET_ERROR = /^#(?:DIV\/0!|N\/A|NAME\?|NULL!|NUM!|REF!|VALUE!|SPILL!|CALC!|GETTING_DATA|FIELD!|BLOCKED!|CONNECT!|BUSY!|UNKNOWN!)$/i
const NOT_FINITE = /^[+-]?(?:inf|infinity|∞|nan|#inf|#nan)$/i
const escape = (s: string) => s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')

/**
 * A number from a cell's text under the file's decimal mark (see the header comment for the rules).
 * Returns the value, or the problem and what to say about it.
 */
export function readCellNumber(raw: string, decimalMark: '.' | ','): NumberReading {
  const text = raw.replace(/^[\s\u00a0\u202f]+|[\s\u00a0\u202f]+$/g, '').replace(/^\u2212/, '-')
  const shown = `'${shorten(raw.trim())}'`
  if (text === '') return { code: 'score-missing', detail: 'The cell is empty; enter a number.' }
  if (NOT_FINITE.test(text)) return { code: 'score-not-finite', detail: `${shown} is not a finite number; enter a number.` }
  if (SPREADSHEET_ERROR.test(text)) return { code: 'cell-error', detail: `${shown} is a spreadsheet error, not a number; correct the formula in the workbook.` }

  const mark = escape(decimalMark)
  const groupMark = decimalMark === '.' ? ',' : '.'
  const plain = new RegExp(`^[+-]?(?:\\d+(?:${mark}\\d*)?|${mark}\\d+)(?:[eE][+-]?\\d+)?$`)
  const grouped = new RegExp(`^[+-]?\\d{1,3}(${escape(groupMark)}|[ \\u00a0\\u202f])\\d{3}(?:\\1\\d{3})*(?:${mark}\\d+)?$`)
  if (plain.test(text) || grouped.test(text)) {
    const normal = text.replace(/[ \u00a0\u202f]/g, '').split(groupMark).join('').replace(decimalMark, '.')
    const value = Number(normal)
    if (!Number.isFinite(value)) return { code: 'score-not-finite', detail: `${shown} is too large to store; use a smaller unit.` }
    return { value }
  }
  // Only digits and separators, yet no reading fits the file's rule: say which reading is meant.
  if (/^[+-]?[\d.,\s\u00a0\u202f]*\d[\d.,\s\u00a0\u202f]*$/.test(text)) {
    const detail = !text.includes(groupMark)
      ? `${shown} has separators in unexpected places. Write the number without thousands separators, with a decimal ${decimalMark === '.' ? 'point' : 'comma'}.`
      : decimalMark === '.'
        ? `${shown} has a comma, but this file uses the decimal point (a comma only separates thousands, in groups of three). Write ${text.replace(/,/g, '.')} if the comma is a decimal mark, or leave the comma out if it separates thousands.`
        : `${shown} has a point, but this file uses the decimal comma (a point only separates thousands, in groups of three). Write ${text.replace(/\./g, ',')} if the point is a decimal mark, or leave the point out if it separates thousands.`
    return { code: 'number-ambiguous', detail }
  }
  const hint = text.includes('%')
    ? 'Write the number without the % sign (the header can say %).'
    : /\d/.test(text)
      ? 'Write the number only; units and words belong in the column header.'
      : 'Enter a number, or an estimate if the value is not known yet.'
  return { code: 'score-not-a-number', detail: `${shown} is not a number. ${hint}` }
}

// ───────────────────────────── file type ─────────────────────────────

interface ZipEntry {
  name: string
  /** 0 stored, 8 deflated; others are not used by spreadsheet programs. */
  method: number
  packedSize: number
  /** What the central directory claims; checked against the real inflated length. */
  declaredSize: number
  localHeader: number
}

interface ZipDirectory {
  names: string[]
  entries: ZipEntry[]
  unpacked: number
}

/** The names and total unpacked size listed in a ZIP's central directory, or null when it cannot be read. */
function zipDirectory(bytes: Buffer): ZipDirectory | null {
  const lowest = Math.max(0, bytes.length - 22 - 0xffff)
  for (let at = bytes.length - 22; at >= lowest; at--) {
    if (bytes.readUInt32LE(at) !== 0x06054b50) continue
    const count = bytes.readUInt16LE(at + 10)
    const directorySize = bytes.readUInt32LE(at + 12)
    let offset = bytes.readUInt32LE(at + 16)
    // Only the plain layout spreadsheet programs write: the directory ends where the end record
    // begins, and no field marks ZIP64. Readers repair other layouts differently (JSZip shifts the
    // offsets, or follows a ZIP64 record), so a file could show this check one directory and the
    // workbook reader another.
    if (count === 0xffff || bytes.readUInt16LE(at + 8) !== count || directorySize === 0xffffffff || offset === 0xffffffff) return null
    if (offset + directorySize !== at) return null
    const names: string[] = []
    const entries: ZipEntry[] = []
    let unpacked = 0
    for (let k = 0; k < count; k++) {
      if (offset + 46 > bytes.length || bytes.readUInt32LE(offset) !== 0x02014b50) return null
      const size = bytes.readUInt32LE(offset + 24)
      const nameLength = bytes.readUInt16LE(offset + 28)
      const skip = nameLength + bytes.readUInt16LE(offset + 30) + bytes.readUInt16LE(offset + 32)
      if (offset + 46 + nameLength > bytes.length) return null
      const name = bytes.toString('utf8', offset + 46, offset + 46 + nameLength)
      names.push(name)
      entries.push({ name, method: bytes.readUInt16LE(offset + 10), packedSize: bytes.readUInt32LE(offset + 20), declaredSize: size, localHeader: bytes.readUInt32LE(offset + 42) })
      // 0xffffffff marks a ZIP64 entry (over 4 GB): count it as too large.
      unpacked += size === 0xffffffff ? Number.POSITIVE_INFINITY : size
      offset += 46 + skip
    }
    return { names, entries, unpacked }
  }
  return null
}

const inflateRawAsync = promisify(inflateRaw)

/**
 * Whether a ZIP really unpacks to at most `limit` bytes, entry by entry, as its directory says. The
 * sizes in a ZIP are only claims: a "zip bomb" can declare a few bytes for an entry that inflates
 * to gigabytes, and the workbook reader would unpack it all. Here each entry is inflated with
 * zlib's output cap (`maxOutputLength`), so no more than the limit is ever produced, and an entry
 * whose real size differs from the claim marks the file as damaged.
 */
export async function zipUnpacksWithin(bytes: Buffer, limit: number): Promise<'ok' | 'too-large' | 'damaged'> {
  const directory = zipDirectory(bytes)
  if (!directory) return 'damaged'
  let total = 0
  for (const entry of directory.entries) {
    const at = entry.localHeader
    if (at + 30 > bytes.length || bytes.readUInt32LE(at) !== 0x04034b50) return 'damaged'
    const start = at + 30 + bytes.readUInt16LE(at + 26) + bytes.readUInt16LE(at + 28)
    if (start + entry.packedSize > bytes.length) return 'damaged'
    const packed = bytes.subarray(start, start + entry.packedSize)
    let size: number
    if (entry.method === 0) size = packed.length
    else if (entry.method === 8) {
      try {
        size = (await inflateRawAsync(packed, { maxOutputLength: Math.max(1, limit - total + 1) })).length
      }
      catch (error) {
        return (error as NodeJS.ErrnoException).code === 'ERR_BUFFER_TOO_LARGE' ? 'too-large' : 'damaged'
      }
    }
    else return 'damaged'
    total += size
    if (total > limit) return 'too-large'
    if (size !== entry.declaredSize) return 'damaged'
  }
  return 'ok'
}

const SIGNATURES: ReadonlyArray<{ bytes: number[], what: string }> = [
  { bytes: [0x25, 0x50, 0x44, 0x46], what: 'a PDF document' },
  { bytes: [0x89, 0x50, 0x4e, 0x47], what: 'a PNG image' },
  { bytes: [0xff, 0xd8, 0xff], what: 'a JPEG image' },
  { bytes: [0x47, 0x49, 0x46, 0x38], what: 'a GIF image' },
  { bytes: [0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1], what: 'an older Excel workbook (.xls) or Office document' },
  { bytes: [0x1f, 0x8b], what: 'a compressed (gzip) file' },
]

const startsWith = (bytes: Buffer, prefix: readonly number[]) => prefix.every((b, i) => bytes[i] === b)

const TOO_LARGE_UNPACKED = `This workbook unpacks to more than ${MAX_XLSX_UNPACKED_BYTES / 1024 / 1024} MB, which is more than a table of alternatives needs. Copy the table into a new workbook, or save it as CSV, and upload that.`
const DAMAGED_WORKBOOK = 'This Excel workbook is damaged or incomplete. Open it in your spreadsheet program, save it again and upload the new file.'

const SAVE_AS = 'Save the table as CSV (UTF-8) or as an Excel workbook (.xlsx) and upload that.'

type Sniffed
  = | { kind: 'xlsx' }
    | { kind: 'text', text: string }
    | { kind: 'problem', code: ImportProblemCode, detail: string, row?: number }

/** Index of the first byte that does not belong to a valid UTF-8 sequence, or -1. */
function firstInvalidUtf8(bytes: Buffer): number {
  let i = 0
  while (i < bytes.length) {
    const b = bytes[i]!
    const need = b < 0x80 ? 0 : b >= 0xc2 && b <= 0xdf ? 1 : b >= 0xe0 && b <= 0xef ? 2 : b >= 0xf0 && b <= 0xf4 ? 3 : -1
    if (need < 0) return i
    for (let k = 1; k <= need; k++) {
      const c = bytes[i + k]
      if (c === undefined || (c & 0xc0) !== 0x80) return i
    }
    // Overlong forms, surrogates and code points above U+10FFFF.
    const c1 = bytes[i + 1] ?? 0
    if ((b === 0xe0 && c1 < 0xa0) || (b === 0xed && c1 > 0x9f) || (b === 0xf0 && c1 < 0x90) || (b === 0xf4 && c1 > 0x8f)) return i
    i += need + 1
  }
  return -1
}

function sniff(bytes: Buffer): Sniffed {
  if (startsWith(bytes, [0x50, 0x4b, 0x03, 0x04]) || startsWith(bytes, [0x50, 0x4b, 0x05, 0x06])) {
    const directory = zipDirectory(bytes)
    if (!directory) {
      // Entry names are stored uncompressed, so a cut-off workbook still shows its xl/ parts.
      const looksLikeWorkbook = bytes.includes('xl/')
      return {
        kind: 'problem',
        code: looksLikeWorkbook ? 'xlsx-unreadable' : 'file-type-unsupported',
        detail: looksLikeWorkbook
          ? DAMAGED_WORKBOOK
          : `This file is a damaged ZIP archive, not a table. ${SAVE_AS}`,
      }
    }
    if (directory.names.includes('xl/workbook.xml')) {
      if (directory.unpacked > MAX_XLSX_UNPACKED_BYTES) {
        return { kind: 'problem', code: 'xlsx-unreadable', detail: TOO_LARGE_UNPACKED }
      }
      return { kind: 'xlsx' }
    }
    const what = directory.names.includes('content.xml') && directory.names.includes('mimetype')
      ? 'an OpenDocument file (.ods or .odt)'
      : directory.names.some(n => n.startsWith('word/'))
        ? 'a Word document'
        : directory.names.some(n => n.startsWith('ppt/')) ? 'a PowerPoint presentation' : 'a ZIP archive'
    return { kind: 'problem', code: 'file-type-unsupported', detail: `This file is ${what}, not a CSV or Excel (.xlsx) table. ${SAVE_AS}` }
  }
  for (const signature of SIGNATURES) {
    if (startsWith(bytes, signature.bytes)) {
      return { kind: 'problem', code: 'file-type-unsupported', detail: `This file is ${signature.what}, not a CSV or Excel (.xlsx) table, whatever its name says. ${SAVE_AS}` }
    }
  }
  const utf16 = startsWith(bytes, [0xff, 0xfe]) || startsWith(bytes, [0xfe, 0xff])
  const head = bytes.subarray(0, 400)
  const nulAtOdd = head.filter((b, i) => i % 2 === 1 && b === 0).length
  const nulAtEven = head.filter((b, i) => i % 2 === 0 && b === 0).length
  if (utf16 || (head.length >= 8 && Math.max(nulAtOdd, nulAtEven) >= head.length / 2 * 0.8)) {
    return { kind: 'problem', code: 'encoding-not-utf8', detail: 'This file is saved as UTF-16 ("Unicode text"), not UTF-8. Save it as "CSV UTF-8" and upload it again.' }
  }
  if (bytes.includes(0)) {
    return { kind: 'problem', code: 'file-binary', detail: `This file holds binary data, not text, so it is not a CSV table. ${SAVE_AS}` }
  }
  const bad = firstInvalidUtf8(bytes)
  if (bad >= 0) {
    const lineStart = bytes.lastIndexOf(0x0a, bad) + 1
    const lineEnd = bytes.indexOf(0x0a, bad)
    // Rows are lines up to the first bad byte; quoted line breaks before it are rare enough to ignore here.
    const row = bytes.subarray(0, lineStart).filter(b => b === 0x0a).length + 1
    const line = new TextDecoder('windows-1252').decode(bytes.subarray(lineStart, lineEnd < 0 ? bytes.length : lineEnd)).replace(/\r$/, '')
    const odd = new TextDecoder('windows-1252').decode(bytes.subarray(bad, bad + 1))
    return {
      kind: 'problem',
      code: 'encoding-not-utf8',
      row,
      detail: `The text is not UTF-8: it has '${odd}' written in an older encoding (probably Latin-1 or Windows-1252), in "${shorten(line)}". Save the file as "CSV UTF-8" and upload it again, so that names keep their accents.`,
    }
  }
  const text = bytes.toString('utf8').replace(/^\uFEFF/, '')
  if (text.trim() === '') return { kind: 'problem', code: 'file-empty', detail: 'The file is empty. Put a header row (names, then one column per criterion) and one row per alternative in it.' }
  return { kind: 'text', text }
}

// ───────────────────────────── CSV ─────────────────────────────

function firstRow(text: string, delimiter: string): string[] {
  const { data } = Papa.parse<string[]>(text, { delimiter, preview: 50, skipEmptyLines: 'greedy' })
  return data[0] ?? []
}

/** The separator: papaparse's guess, checked against how many criteria each candidate's header matches. */
function chooseDelimiter(text: string, criteria: readonly Criterion[]): CsvDelimiter {
  const guessed = Papa.parse<string[]>(text, { preview: 20, delimitersToGuess: [...CSV_DELIMITERS] }).meta.delimiter
  const ranked = CSV_DELIMITERS.map((delimiter) => {
    const header = firstRow(text, delimiter)
    const matches = new Set(header.slice(1).map(h => criterionFor(h, criteria)?.criterion.id).filter(Boolean)).size
    return { delimiter, score: [matches, header.length >= 2 ? 1 : 0, delimiter === guessed ? 1 : 0] }
  })
  ranked.sort((a, b) => b.score[0]! - a.score[0]! || b.score[1]! - a.score[1]! || b.score[2]! - a.score[2]!)
  return ranked[0]!.delimiter
}

function csvGrid(text: string, criteria: readonly Criterion[], problems: Problems): (Grid & { delimiter: CsvDelimiter }) | null {
  const normalised = text.replace(/\r\n?/g, '\n')
  const delimiter = chooseDelimiter(normalised, criteria)
  const parsed = Papa.parse<string[]>(normalised, { delimiter, newline: '\n', skipEmptyLines: false, quoteChar: '"' })
  const quoteError = parsed.errors.find(e => e.type === 'Quotes')
  if (quoteError) {
    const row = (quoteError.row ?? 0) + 1
    problems.add('quotes-malformed', 'A quote mark (") in this row is not closed or is out of place, so the rows from here on cannot be read reliably. Close every quoted cell, and inside one write a quote mark twice ("").', { row })
    return null
  }
  const rows: GridRow[] = []
  parsed.data.forEach((fields, index) => {
    if (fields.every(f => f.trim() === '')) return
    rows.push({ row: index + 1, cells: fields.map(f => (f.trim() === '' ? EMPTY : { kind: 'text', text: f })) })
  })
  return { rows, strictWidth: true, decimalMark: delimiter === ',' ? '.' : ',', detectMark: delimiter !== ',', delimiter }
}

// ───────────────────────────── XLSX ─────────────────────────────

function xlsxCell(value: ExcelJS.CellValue): Cell {
  if (value === null || value === undefined) return EMPTY
  if (typeof value === 'number') return { kind: 'number', value }
  if (typeof value === 'string') return value.trim() === '' ? EMPTY : { kind: 'text', text: value }
  if (typeof value === 'boolean') return { kind: 'other', text: value ? 'TRUE' : 'FALSE', what: 'TRUE or FALSE' }
  if (value instanceof Date) return { kind: 'other', text: value.toISOString().slice(0, 10), what: 'a date' }
  if (typeof value === 'object') {
    if ('error' in value) return { kind: 'error', text: String(value.error) }
    if ('formula' in value || 'sharedFormula' in value) {
      const result = (value as { result?: ExcelJS.CellValue }).result
      if (result === undefined) return { kind: 'formula', formula: String((value as { formula?: string, sharedFormula?: string }).formula ?? (value as { sharedFormula?: string }).sharedFormula ?? '') }
      // Formula results can themselves be errors ({ error }) or values.
      return xlsxCell(result as ExcelJS.CellValue)
    }
    if ('richText' in value) return xlsxCell(value.richText.map(part => part.text).join(''))
    if ('text' in value) return xlsxCell((value as { text: ExcelJS.CellValue }).text)
  }
  return { kind: 'other', text: String(value), what: 'not a number' }
}

async function xlsxGrid(bytes: Buffer, problems: Problems): Promise<(Grid & { sheet: string }) | null> {
  const workbook: ExcelJS.Workbook = new (ExcelJSBundle as typeof ExcelJS).Workbook()
  try {
    // exceljs's typings predate Node's generic Buffer.
    await workbook.xlsx.load(bytes as unknown as ExcelJS.Buffer)
  }
  catch {
    problems.add('xlsx-unreadable', 'This Excel workbook could not be opened: it may be damaged, protected with a password, or only partly saved. Open it in your spreadsheet program, save it again (or save it as CSV) and upload the new file.')
    return null
  }
  const sheets = workbook.worksheets.filter(sheet => sheet.state === 'visible' || sheet.state === undefined)
  const sheet = sheets.find(s => s.actualRowCount > 0)
  if (!sheet) {
    problems.add('file-empty', 'The workbook has no table in it: its visible sheets are empty. Put a header row (names, then one column per criterion) and one row per alternative on the first sheet.')
    return null
  }
  const rows: GridRow[] = []
  sheet.eachRow({ includeEmpty: false }, (row, rowNumber) => {
    const values = Array.isArray(row.values) ? row.values : []
    const cells: Cell[] = []
    for (let c = 1; c < values.length; c++) cells.push(xlsxCell(values[c] as ExcelJS.CellValue))
    if (cells.every(isEmpty)) return
    rows.push({ row: rowNumber, cells })
  })
  if (rows.length === 0) {
    problems.add('file-empty', `The sheet '${sheet.name}' has no values in it. Put a header row and one row per alternative on it.`)
    return null
  }
  return { rows, strictWidth: false, decimalMark: '.', detectMark: false, sheet: sheet.name }
}

// ───────────────────────────── header ─────────────────────────────

interface CriterionMatch {
  criterion: Criterion
  unit: string | null
}

const UNIT_SUFFIX = /^(.*?)\s*(?:\(([^()]*)\)|\[([^[\]]*)\])$/

/** The criterion a header names, allowing a unit in brackets after the name. */
function criterionFor(header: string, criteria: readonly Criterion[]): CriterionMatch | null {
  const key = nameKey(header)
  if (key === '') return null
  const exact = criteria.find(c => nameKey(c.name) === key)
  if (exact) return { criterion: exact, unit: null }
  const suffix = UNIT_SUFFIX.exec(tidy(header))
  if (!suffix) return null
  const base = nameKey(suffix[1]!)
  const found = criteria.find(c => nameKey(c.name) === base)
  return found ? { criterion: found, unit: (suffix[2] ?? suffix[3] ?? '').trim() } : null
}

const unitKey = (unit: string) => unit.normalize('NFC').replace(/\s+/g, '')

const headerFor = (c: Criterion) => (c.unit ? `${c.name} (${c.unit})` : c.name)

interface Layout {
  columns: ImportColumn[]
  /** Column index → criterion, for the matched score columns. */
  scoreColumns: Map<number, Criterion>
  /** Columns that count for the row-length check: the last one that is not ignored, plus one. */
  width: number
  headerWidth: number
}

/** Headers of the verdict columns our CSV export adds, so an exported file uploads again as it is. */
const EXPORT_VERDICT_KEYS = new Set(EXPORT_VERDICT_HEADERS.map(nameKey))

function readHeader(grid: Grid, criteria: readonly Criterion[], problems: Problems): Layout | null {
  const header = grid.rows[0]!
  const texts = header.cells.map(cell => tidy(cellText(cell)))
  const columns: ImportColumn[] = []
  const scoreColumns = new Map<number, Criterion>()
  const firstColumnFor = new Map<string, number>()
  let width = 1

  const nameMatch = criterionFor(texts[0] ?? '', criteria)
  if (nameMatch) {
    problems.add('name-column-missing', `Column A should hold the alternatives' names, but its header '${texts[0]}' is the criterion ${nameMatch.criterion.name}. Add a column of names at the left (the header can be anything, such as "Alternative").`, { row: header.row, column: texts[0], columnLetter: 'A', criterionId: nameMatch.criterion.id })
    return null
  }
  columns.push({ header: texts[0] ?? '', letter: 'A', criterionId: null })

  const maxWidth = Math.max(...grid.rows.map(r => r.cells.length))
  for (let c = 1; c < maxWidth; c++) {
    const text = texts[c] ?? ''
    const letter = spreadsheetColumn(c)
    if (text === '') {
      const hasValues = grid.rows.slice(1).some(r => !isEmpty(r.cells[c]))
      if (hasValues && c < texts.length) {
        problems.add('column-header-empty', 'This column has values but no header. Head it with the criterion it measures, or delete the column.', { row: header.row, columnLetter: letter })
        width = c + 1
      }
      continue
    }
    width = c + 1
    const match = criterionFor(text, criteria)
    const where = { row: header.row, column: text, columnLetter: letter }
    if (!match && EXPORT_VERDICT_KEYS.has(nameKey(text))) {
      columns.push({ header: text, letter, criterionId: null, ignored: true })
      continue
    }
    if (!match) {
      const names = criteria.slice(0, 8).map(c => c.name).join(', ') + (criteria.length > 8 ? ', …' : '')
      problems.add('column-unknown', `This column does not match any criterion of the room (${names}). Remove the column, or rename it to one of them.`, where)
      columns.push({ header: text, letter, criterionId: null })
      continue
    }
    const { criterion, unit } = match
    const earlier = firstColumnFor.get(criterion.id)
    if (earlier !== undefined) {
      problems.add('column-duplicate', `This column is the criterion ${criterion.name} again (column ${spreadsheetColumn(earlier)} is too). Keep one of the two columns.`, { ...where, criterionId: criterion.id })
      columns.push({ header: text, letter, criterionId: null })
      continue
    }
    firstColumnFor.set(criterion.id, c)
    if (unit !== null && criterion.unit && unit !== '' && unitKey(unit) !== unitKey(criterion.unit)) {
      problems.add('unit-mismatch', `The header gives the unit ${unit}, but ${criterion.name} is measured in ${criterion.unit}. Convert the numbers to ${criterion.unit} and head the column '${headerFor(criterion)}', or leave the unit out of the header if the numbers already are in ${criterion.unit}.`, { ...where, criterionId: criterion.id })
    }
    columns.push({ header: text, letter, criterionId: criterion.id })
    scoreColumns.set(c, criterion)
  }
  for (const criterion of criteria) {
    if (!firstColumnFor.has(criterion.id)) {
      problems.add('column-missing', `No column for the criterion ${criterion.name}${criterion.unit ? ` (${criterion.unit})` : ''}. Add a column headed '${headerFor(criterion)}'.`, { criterionId: criterion.id })
    }
  }
  return { columns, scoreColumns, width, headerWidth: texts.length }
}

// ───────────────────────────── rows ─────────────────────────────

function readScore(cell: Cell | undefined, decimalMark: '.' | ','): NumberReading {
  if (cell === undefined || isEmpty(cell)) return { code: 'score-missing', detail: 'The cell is empty; enter a number.' }
  switch (cell.kind) {
    case 'number':
      return Number.isFinite(cell.value) ? { value: cell.value } : { code: 'score-not-finite', detail: `${cell.value} is not a finite number; enter a number.` }
    case 'text':
      return readCellNumber(cell.text, decimalMark)
    case 'error':
      return { code: 'cell-error', detail: `'${cell.text}' is a spreadsheet error, not a number; correct the formula in the workbook.` }
    case 'formula':
      return { code: 'formula-no-result', detail: `The formula =${shorten(cell.formula)} has no saved result. Open the workbook in a spreadsheet program so it recalculates, save it and upload it again (or type the value in).` }
    case 'other':
      return { code: 'score-not-a-number', detail: `'${cell.text}' is ${cell.what}, not a number. Format the cell as a number in the workbook.` }
    default:
      return { code: 'score-missing', detail: 'The cell is empty; enter a number.' }
  }
}

function newAlternativeId(taken: Set<string>): string {
  for (;;) {
    const id = `a-${randomBytes(6).toString('hex')}`
    if (!taken.has(id)) {
      taken.add(id)
      return id
    }
  }
}

/**
 * Read an uploaded file of alternatives against the room's criteria. Never throws for the file's
 * content: every fault is listed in `problems` (capped at MAX_IMPORT_PROBLEMS_KEPT, all counted in
 * `problemTotal` and `groups`). Existing alternatives keep their id when the name matches.
 * O(rows × columns).
 */
export async function parseLedgerFile(file: LedgerImportFile, criteria: readonly Criterion[], existing: readonly Alternative[]): Promise<LedgerImport> {
  const problems = new Problems()
  const result: LedgerImport = {
    format: null,
    mediaType: 'application/octet-stream',
    columns: [],
    alternatives: [],
    rows: [],
    rowCount: 0,
    kept: 0,
    removed: [],
    problems: problems.list,
    problemTotal: 0,
    groups: [],
  }
  const finish = () => {
    result.problemTotal = problems.total
    result.groups = problems.summarised()
    return result
  }

  const bytes = file.bytes
  if (bytes.length === 0) {
    problems.add('file-empty', 'The file is empty. Put a header row (names, then one column per criterion) and one row per alternative in it.')
    return finish()
  }
  if (bytes.length > MAX_UPLOAD_BYTES) {
    problems.add('file-too-large', `The file is ${(bytes.length / 1024 / 1024).toFixed(1)} MB; the largest upload is ${MAX_UPLOAD_BYTES / 1024 / 1024} MB. Remove anything but the table (other sheets, pictures), or save it as CSV.`)
    return finish()
  }
  if (criteria.length === 0) {
    problems.add('no-criteria', 'The room has no criteria yet. Define the criteria first, then upload the alternatives.')
    return finish()
  }

  const sniffed = sniff(bytes)
  if (sniffed.kind === 'problem') {
    problems.add(sniffed.code, sniffed.detail, sniffed.row !== undefined ? { row: sniffed.row } : {})
    return finish()
  }
  let grid: Grid | null
  if (sniffed.kind === 'xlsx') {
    result.format = 'xlsx'
    result.mediaType = XLSX_MEDIA_TYPE
    const unpacks = await zipUnpacksWithin(bytes, MAX_XLSX_UNPACKED_BYTES)
    if (unpacks !== 'ok') {
      problems.add('xlsx-unreadable', unpacks === 'too-large' ? TOO_LARGE_UNPACKED : DAMAGED_WORKBOOK)
      return finish()
    }
    const sheetGrid = await xlsxGrid(bytes, problems)
    if (sheetGrid) result.sheet = sheetGrid.sheet
    grid = sheetGrid
  }
  else {
    result.format = 'csv'
    result.mediaType = CSV_MEDIA_TYPE
    const textGrid = csvGrid(sniffed.text, criteria, problems)
    if (textGrid) result.delimiter = textGrid.delimiter
    grid = textGrid
  }
  if (!grid) return finish()
  if (grid.rows.length === 0) {
    problems.add('file-empty', 'The file has no values in it. Put a header row (names, then one column per criterion) and one row per alternative in it.')
    return finish()
  }

  const header = grid.rows[0]!
  if (result.format === 'csv' && header.cells.length < 2) {
    const text = shorten(cellText(header.cells[0] ?? EMPTY))
    problems.add('columns-not-found', `The header row has one column only ('${text}'). Separate the columns with commas, semicolons or tabs: the names first, then one column per criterion (${criteria.map(headerFor).join(', ')}).`, { row: header.row })
    return finish()
  }
  const layout = readHeader(grid, criteria, problems)
  if (!layout) return finish()
  result.columns = layout.columns

  const dataRows = grid.rows.slice(1)
  result.rowCount = dataRows.length
  if (dataRows.length === 0) {
    problems.add('no-rows', 'The file has a header row but no alternatives below it. Add one row per alternative: its name in column A and a number under each criterion.', { row: header.row })
    return finish()
  }
  if (dataRows.length > MAX_ALTERNATIVES) {
    problems.add('too-many-rows', `The file has ${dataRows.length.toLocaleString('en-GB')} rows of alternatives; a ledger holds at most ${MAX_ALTERNATIVES.toLocaleString('en-GB')}. Split the table, or remove alternatives that are out of the question.`, { row: dataRows[MAX_ALTERNATIVES]!.row })
  }
  const rows = dataRows.slice(0, MAX_ALTERNATIVES)

  let decimalMark = grid.decimalMark
  if (grid.detectMark) {
    const anyComma = rows.some(r => [...layout.scoreColumns.keys()].some((c) => {
      const cell = r.cells[c]
      return cell?.kind === 'text' && cell.text.includes(',')
    }))
    decimalMark = anyComma ? ',' : '.'
  }
  if (result.format === 'csv') result.decimalMark = decimalMark

  const existingByName = new Map<string, Alternative>()
  for (const alternative of existing) if (!existingByName.has(nameKey(alternative.name))) existingByName.set(nameKey(alternative.name), alternative)
  const takenIds = new Set(existing.map(a => a.id))
  const keptIds = new Set<string>()
  const firstRowFor = new Map<string, number>()
  const nameColumn = layout.columns[0]!.header || undefined

  for (const { row, cells } of rows) {
    const at = (c: number): Where => ({ row, column: c === 0 ? nameColumn : tidy(cellText(header.cells[c] ?? EMPTY)), columnLetter: spreadsheetColumn(c) })

    if (grid.strictWidth) {
      const extra = cells.findIndex((cell, c) => c >= layout.headerWidth && !isEmpty(cell))
      if (extra >= 0) {
        problems.add('row-too-long', `'${shorten(cellText(cells[extra]!))}' is beyond the last column of the header, so the values in this row may have shifted. Check the row, or remove the extra cells.`, { row, columnLetter: spreadsheetColumn(extra), value: shorten(cellText(cells[extra]!)) })
      }
      else if (cells.length < layout.width) {
        problems.add('row-too-short', `This row has ${plural(cells.length, 'cell', 'cells')} where the header has ${layout.width}. A separator may be missing, or the row may be cut short; check it in the file.`, { row })
      }
    }
    else {
      const extra = cells.findIndex((cell, c) => c >= layout.width && !isEmpty(cell))
      if (extra >= 0) {
        problems.add('row-too-long', `'${shorten(cellText(cells[extra]!))}' is in a column with no header. Give the column a header, or clear the cell.`, { row, columnLetter: spreadsheetColumn(extra), value: shorten(cellText(cells[extra]!)) })
      }
    }
    const short = grid.strictWidth && cells.length < layout.width

    let name = ''
    const nameCell = cells[0] ?? EMPTY
    if (nameCell.kind === 'error') problems.add('cell-error', `'${nameCell.text}' is a spreadsheet error, not a name.`, { ...at(0), value: nameCell.text })
    else if (nameCell.kind === 'formula') problems.add('formula-no-result', `The formula =${shorten(nameCell.formula)} has no saved result. Open the workbook so it recalculates, save it and upload it again.`, at(0))
    else name = tidy(cellText(nameCell))
    if (name === '' && nameCell.kind !== 'error' && nameCell.kind !== 'formula') {
      problems.add('name-empty', 'This row has numbers but no name. Name the alternative, or delete the row if it is not one.', at(0))
    }
    else if (name.length > MAX_IMPORT_NAME_LENGTH) {
      problems.add('name-too-long', `The name has ${name.length} characters; keep it under ${MAX_IMPORT_NAME_LENGTH}.`, { ...at(0), value: shorten(name) })
    }
    else if (SINGLE_LINE_FORBIDDEN.test(name)) {
      const at0 = forbiddenAt(name, SINGLE_LINE_FORBIDDEN)!
      const visible = shorten(name.replace(new RegExp(SINGLE_LINE_FORBIDDEN.source, 'gu'), '\uFFFD'))
      problems.add('name-control-character', `Character ${at0.position} of the name is the control character ${at0.code}; names stay plain text on one line. Delete it in the file.`, { ...at(0), value: visible })
    }
    else if (name !== '') {
      const key = nameKey(name)
      const first = firstRowFor.get(key)
      if (first !== undefined) problems.add('name-duplicate', `'${shorten(name)}' is already the name in row ${first}. Give each alternative its own name.`, { ...at(0), value: shorten(name) })
      else firstRowFor.set(key, row)
    }

    const scores: Record<string, number> = {}
    for (const [c, criterion] of layout.scoreColumns) {
      if (short && c >= cells.length) continue
      const reading = readScore(cells[c], decimalMark)
      if ('value' in reading) scores[criterion.id] = reading.value
      else problems.add(reading.code, reading.detail, { ...at(c), criterionId: criterion.id, ...(isEmpty(cells[c]) ? {} : { value: shorten(cellText(cells[c]!)) }) })
    }

    // A repeated name is a problem above; its second row still needs an id of its own.
    const known = name === '' ? undefined : existingByName.get(nameKey(name))
    let id: string
    if (known && !keptIds.has(known.id)) {
      id = known.id
      keptIds.add(id)
    }
    else {
      id = newAlternativeId(takenIds)
    }
    result.alternatives.push({ id, name, scores })
    result.rows.push(row)
  }
  result.kept = keptIds.size
  const inFile = new Set(result.alternatives.map(a => nameKey(a.name)))
  result.removed = existing.filter(a => !inFile.has(nameKey(a.name))).map(a => a.name)
  return finish()
}

// ───────────────────────────── the upload request ─────────────────────────────

/** Room for the multipart framing around the file and the two small fields. */
const MULTIPART_ALLOWANCE = 64 * 1024

const UploadFields = z.object({
  mode: z.enum(LEDGER_IMPORT_MODES, { error: 'Say whether to preview or confirm the upload (mode).' }),
  baseVersion: z.coerce.number({ error: 'Send the ledger version the upload is based on (baseVersion).' }).int({ error: 'baseVersion is a whole number.' }).min(0, { error: 'baseVersion is a whole number.' }),
})

export interface LedgerUploadRequest {
  file: LedgerImportFile
  mode: LedgerImportMode
  baseVersion: number
}

function tooLarge(size: number) {
  return createError({
    statusCode: 413,
    message: `The upload is ${(size / 1024 / 1024).toFixed(1)} MB; the largest file accepted is ${MAX_UPLOAD_BYTES / 1024 / 1024} MB. Remove anything but the table (other sheets, pictures), or save it as CSV, and upload it again.`,
  })
}

/**
 * The multipart upload of the import route: a `file` part and the fields `mode` and `baseVersion`.
 * A body over the size limit is refused from its Content-Length before it is read (413); a body
 * without a Content-Length is refused too (411), so no request is read without a known size.
 * Missing or malformed parts answer 400 with data.fieldErrors.
 */
export async function readLedgerUpload(event: H3Event): Promise<LedgerUploadRequest> {
  const contentType = getRequestHeader(event, 'content-type') ?? ''
  if (!contentType.startsWith('multipart/form-data')) {
    throw createError({ statusCode: 400, message: 'Send the file as multipart/form-data, with a part named "file".', data: { fieldErrors: { file: 'Choose a CSV or XLSX file.' } } })
  }
  const declared = Number(getRequestHeader(event, 'content-length'))
  if (!Number.isFinite(declared) || declared <= 0) {
    throw createError({ statusCode: 411, message: 'The upload must state its length (Content-Length).' })
  }
  if (declared > MAX_UPLOAD_BYTES + MULTIPART_ALLOWANCE) throw tooLarge(declared)

  let parts: Awaited<ReturnType<typeof readMultipartFormData>>
  try {
    parts = await readMultipartFormData(event)
  }
  catch {
    throw createError({ statusCode: 400, message: 'The upload could not be read as multipart/form-data. Try choosing the file again.' })
  }
  const filePart = parts?.find(p => p.name === 'file' && p.filename !== undefined)
  const field = (name: string) => parts?.find(p => p.name === name && p.filename === undefined)?.data.toString('utf8')
  const fields = UploadFields.safeParse({ mode: field('mode'), baseVersion: field('baseVersion') })
  const fieldErrors: Record<string, string> = {}
  if (!filePart) fieldErrors.file = 'Choose a CSV or XLSX file.'
  if (!fields.success) {
    for (const issue of fields.error.issues) fieldErrors[String(issue.path[0] ?? '_')] ??= issue.message
  }
  if (!filePart || !fields.success) {
    throw createError({ statusCode: 400, message: Object.values(fieldErrors)[0] ?? 'The upload is not valid.', data: { fieldErrors } })
  }
  if (filePart.data.length > MAX_UPLOAD_BYTES) throw tooLarge(filePart.data.length)
  // Keep the last path segment only (some browsers send a full path), and a sensible length.
  const filename = (filePart.filename ?? '').split(/[\\/]/).pop()!.replace(/\p{Cc}/gu, '').trim().slice(0, 200) || 'upload'
  return { file: { filename, bytes: filePart.data }, mode: fields.data.mode, baseVersion: fields.data.baseVersion }
}
