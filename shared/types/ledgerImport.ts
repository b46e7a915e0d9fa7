/**
 * Uploading a ledger's alternatives from a CSV or XLSX file: the problem codes, the limits and the
 * shapes the import route answers with. Plain data, used by the parser (server/utils/ledgerImport.ts),
 * the route (server/api/rooms/[id]/ledger/import.post.ts) and the upload panel (LedgerUpload.vue).
 */
import type { Alternative } from './decision'

/** The largest file accepted, in bytes (5 MB). Larger uploads answer 413 before they are parsed. */
export const MAX_UPLOAD_BYTES = 5 * 1024 * 1024

/** What the upload route is asked to do with the file. */
export const LEDGER_IMPORT_MODES = ['preview', 'confirm'] as const
export type LedgerImportMode = (typeof LEDGER_IMPORT_MODES)[number]

export const LEDGER_IMPORT_FORMATS = ['csv', 'xlsx'] as const
export type LedgerImportFormat = (typeof LEDGER_IMPORT_FORMATS)[number]

/** The column separators a CSV file may use. */
export const CSV_DELIMITERS = [',', ';', '\t'] as const
export type CsvDelimiter = (typeof CSV_DELIMITERS)[number]

/**
 * Every way an uploaded file can be unfit, from the whole file down to one cell. A file with any
 * of these cannot be confirmed. The order is the order of the checks, so it is also a sensible
 * order to show groups in.
 */
export const IMPORT_PROBLEM_CODES = [
  // the whole file
  'file-empty',
  'file-too-large',
  'file-type-unsupported',
  'file-binary',
  'encoding-not-utf8',
  'xlsx-unreadable',
  'quotes-malformed',
  'no-criteria',
  // the header row
  'columns-not-found',
  'name-column-missing',
  'column-header-empty',
  'column-unknown',
  'column-duplicate',
  'column-missing',
  'unit-mismatch',
  // the rows
  'no-rows',
  'too-many-rows',
  'row-too-long',
  'row-too-short',
  'name-empty',
  'name-too-long',
  'name-control-character',
  'name-duplicate',
  // the cells
  'score-missing',
  'score-not-a-number',
  'score-not-finite',
  'number-ambiguous',
  'formula-no-result',
  'cell-error',
] as const
export type ImportProblemCode = (typeof IMPORT_PROBLEM_CODES)[number]

/** One problem, placed as a spreadsheet shows it: the header is row 1, columns are A, B, … AA. */
export interface ImportProblem {
  code: ImportProblemCode
  /** The whole sentence, location first: "Row 7, column 'Habitat affected': 'n/a' is not a number." */
  message: string
  /** The same sentence without the location, for lists already grouped by column. */
  detail: string
  row?: number
  /** Header text as in the file (line breaks inside the header shown as spaces). */
  column?: string
  columnLetter?: string
  criterionId?: string
  /** The cell's text as found, shortened to 60 characters. */
  value?: string
}

/**
 * Problems of one kind in one column (or in the whole file), counted over every problem found,
 * not just the ones sent. `summary` says what to do: "3 rows need a number in Habitat affected —
 * fill them in the file and upload it again."
 */
export interface ImportProblemGroup {
  code: ImportProblemCode
  column?: string
  columnLetter?: string
  criterionId?: string
  count: number
  /** The first rows concerned, in order (at most 20). */
  rows: number[]
  summary: string
}

/** One column of the file and the criterion it was matched to (null: the names column, or no match). */
export interface ImportColumn {
  header: string
  letter: string
  criterionId: string | null
  /** A verdict column of our own CSV export (Status, Reason …): read past, never saved. */
  ignored?: true
}

/** What the upload route answers to `mode=preview` (200); the problems are also the body's data on a 422. */
export interface LedgerImportPreview {
  filename: string
  format: LedgerImportFormat | null
  delimiter?: CsvDelimiter
  decimalMark?: '.' | ','
  sheet?: string
  columns: ImportColumn[]
  /** The first alternatives as they would be saved. */
  preview: Alternative[]
  /** The spreadsheet row of each alternative in `preview`. */
  previewRows: number[]
  /** Rows of alternatives in the file (rows that are entirely empty are not counted). */
  rowCount: number
  /** Alternatives whose name matches one already in the ledger: they keep their identity. */
  kept: number
  /** Names of alternatives in the current ledger that the file does not have: confirming removes them. */
  removed: string[]
  problems: ImportProblem[]
  problemTotal: number
  groups: ImportProblemGroup[]
  /** The ledger version the preview was made against: send it back as baseVersion to confirm. */
  baseVersion: number
}
