/**
 * Domain types of the decision engine. Plain data: no Vue, Nitro, SQL or CSS here.
 * The engine in shared/utils takes these and returns plain data, so the server, the phones
 * and the tests all run the same code.
 */

export const DIRECTIONS = ['min', 'max'] as const
/** `min`: lower is better (cost, delay). `max`: higher is better (homes protected). */
export type Direction = (typeof DIRECTIONS)[number]

export interface Criterion {
  id: string
  name: string
  unit: string
  direction: Direction
  /** Lowest acceptable value (inclusive). Alternatives below it are outside limits (infeasible). */
  lowest?: number | null
  /** Highest acceptable value (inclusive). Alternatives above it are outside limits (infeasible). */
  highest?: number | null
  /** Decimal places to show; display only, never used in comparisons. */
  precision?: number | null
  description?: string | null
}

export interface Alternative {
  id: string
  name: string
  /** One score per criterion, keyed by criterion id. */
  scores: Record<string, number>
}

/** Status of an alternative after the narrowing, from worst to best. */
export const ALTERNATIVE_STATUSES = [
  'infeasible',
  'dominated',
  'weakly-efficient',
  'efficient',
] as const
export type AlternativeStatus = (typeof ALTERNATIVE_STATUSES)[number]
