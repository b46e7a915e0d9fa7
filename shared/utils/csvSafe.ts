/**
 * A cell for a CSV file that spreadsheets will open: text that begins with =, +, -, @, a tab or a
 * carriage return is prefixed with an apostrophe, so it is shown as text and never run as a
 * formula (the usual defence against CSV formula injection, as described by OWASP). Finite
 * numbers are written as numbers: a spreadsheet reads "-3" as minus three, not as a formula.
 */
export function csvCell(value: string | number | boolean | null | undefined): string {
  if (value === null || value === undefined) return ''
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : ''
  if (typeof value === 'boolean') return value ? 'yes' : 'no'
  return /^[=+\-@\t\r]/.test(value) ? `'${value}` : value
}
