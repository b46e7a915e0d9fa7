/**
 * A number typed by a person: accepts a decimal point or a decimal comma ("12,5"), a leading
 * sign, surrounding spaces and exponent notation; refuses anything else (thousands separators,
 * units, "n/a", Infinity) with null rather than guessing. Pure; used by forms on both sides.
 */
export function parseDecimal(input: string): number | null {
  const trimmed = input.trim()
  if (!/^[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:e[+-]?\d+)?$/i.test(trimmed)) return null
  const value = Number(trimmed.replace(',', '.'))
  return Number.isFinite(value) ? value : null
}
