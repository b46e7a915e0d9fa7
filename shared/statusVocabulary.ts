/**
 * The status vocabulary: one word, shape, colour and description per status, used alike by the
 * option table, the charts, the gallery and the minutes. Plain data (no Vue, no CSS classes), so
 * the PDF writer and the tests read the same table as the browser.
 *
 * Never colour alone: every place that shows a status shows its shape and its word too.
 */
import type { AlternativeStatus, Criterion } from './types/decision'
import type { AlternativeVerdict } from './types/engine'

/**
 * What the room sees: the engine's four statuses, plus "efficient but unsupported" (an efficient
 * alternative no weighted sum can pick) and "chosen" (the resolution's alternative).
 * In the order tables sort them, best first.
 */
export const DISPLAY_STATUSES = ['chosen', 'efficient', 'unsupported', 'weakly-efficient', 'dominated', 'infeasible'] as const
export type DisplayStatus = (typeof DISPLAY_STATUSES)[number]

export type StatusShape = 'circle' | 'half-circle' | 'open-circle' | 'cross' | 'diamond' | 'ringed-circle'

export interface StatusEntry {
  /** The word on screen, capitalised as at the start of a label. */
  word: string
  /** The same shape as a character, for plain text (CSV, e-mail); screens draw `shape`. */
  symbol: string
  shape: StatusShape
  /** One plain sentence for help text and tooltips. */
  description: string
  /** Outline colour (hex, from the palette in tailwind.config.ts). */
  stroke: string
  /** Fill colour, or null for an outline only. For 'half-circle' the fill covers the left half. */
  fill: string | null
  /** Dashed outline (unsupported). */
  dashed: boolean
  /** Drawn faded (dominated): lighter outline, and secondary text. */
  faded: boolean
  /** Between the word and its reason when both are written out in one sentence. */
  joiner: string
}

/** Palette values the statuses use (checked against tailwind.config.ts by a unit test). */
export const STATUS_COLOURS = {
  brass300: '#e6bd55',
  brass500: '#bf8520',
  brass600: '#9c6819',
  brass700: '#7a5017',
  slate500: '#6b7682',
  rust600: '#9c3f25',
  rust100: '#f8e1d7',
  ink800: '#12393a',
} as const

export const STATUS_VOCABULARY = {
  'chosen': {
    word: 'Chosen',
    symbol: '◉',
    shape: 'ringed-circle',
    description: 'The alternative the room chose.',
    stroke: STATUS_COLOURS.ink800,
    fill: STATUS_COLOURS.brass500,
    dashed: false,
    faded: false,
    joiner: ': ',
  },
  'efficient': {
    word: 'Efficient',
    symbol: '●',
    shape: 'circle',
    description: 'Within limits, and no other alternative is at least as good on every criterion and better on one.',
    stroke: STATUS_COLOURS.brass700,
    fill: STATUS_COLOURS.brass500,
    dashed: false,
    faded: false,
    joiner: ': ',
  },
  'unsupported': {
    word: 'Efficient but unsupported',
    symbol: '◇',
    shape: 'diamond',
    description: 'Efficient, but no slider weighting picks this: it sits in a dent of the front, behind a blend of its neighbours.',
    stroke: STATUS_COLOURS.brass600,
    fill: null,
    dashed: true,
    faded: false,
    joiner: ': ',
  },
  'weakly-efficient': {
    word: 'Weakly efficient only',
    symbol: '◐',
    shape: 'half-circle',
    description: 'Within limits; another alternative is as good everywhere and better somewhere, but none is better on every criterion.',
    stroke: STATUS_COLOURS.brass600,
    fill: STATUS_COLOURS.brass300,
    dashed: false,
    faded: false,
    joiner: ': ',
  },
  'dominated': {
    word: 'Dominated',
    symbol: '○',
    shape: 'open-circle',
    description: 'Within limits, but another alternative is better on every criterion.',
    stroke: STATUS_COLOURS.slate500,
    fill: null,
    dashed: false,
    faded: true,
    joiner: ' ',
  },
  'infeasible': {
    word: 'Outside limits',
    symbol: '✕',
    shape: 'cross',
    description: 'Breaks at least one hard limit, so it takes no further part.',
    stroke: STATUS_COLOURS.rust600,
    fill: null,
    dashed: false,
    faded: false,
    joiner: ': ',
  },
} as const satisfies Record<DisplayStatus, StatusEntry>

/** The reason shown for an efficient alternative that no weighted sum can pick. */
export const UNSUPPORTED_REASON = 'no slider weighting picks this'

/**
 * The status the room sees for a verdict: the engine's status, except that an efficient
 * alternative whose support test failed is 'unsupported'. An efficient alternative whose support
 * was not computed (`supported` null, large fronts) stays 'efficient'.
 */
export function displayStatusOf(verdict: Pick<AlternativeVerdict, 'status' | 'supported'>): Exclude<DisplayStatus, 'chosen'> {
  if (verdict.status === 'efficient' && verdict.supported === false) return 'unsupported'
  return verdict.status
}

/** Sort rank of a status, 0 = best (`DISPLAY_STATUSES` order). */
export function statusRank(status: DisplayStatus): number {
  return DISPLAY_STATUSES.indexOf(status)
}

const formatters = new Map<number | null, Intl.NumberFormat>()

/**
 * A number as the room reads it: British grouping ("12,500"), exactly `precision` decimal places
 * when the criterion sets one, otherwise up to 6 (so binary noise such as 0.30000000000000004
 * reads 0.3). NaN reads "—".
 */
export function formatNumber(value: number, precision?: number | null): string {
  if (Number.isNaN(value)) return '—'
  const key = precision ?? null
  let format = formatters.get(key)
  if (!format) {
    format = new Intl.NumberFormat('en-GB', key === null
      ? { maximumFractionDigits: 6 }
      : { minimumFractionDigits: key, maximumFractionDigits: key })
    formatters.set(key, format)
  }
  return format.format(value)
}

/** A score with its criterion's precision and unit: "31.5 £m", "12,000 homes", "40%". */
export function formatScore(value: number, criterion: Pick<Criterion, 'unit' | 'precision'>): string {
  const number = formatNumber(value, criterion.precision)
  const unit = criterion.unit?.trim() ?? ''
  if (!unit) return number
  return unit === '%' ? `${number}%` : `${number} ${unit}`
}

/** "A", "A and B", "A, B and C". */
export function joinWords(words: readonly string[]): string {
  if (words.length <= 1) return words[0] ?? ''
  return `${words.slice(0, -1).join(', ')} and ${words[words.length - 1]}`
}

/** "lower is better" / "higher is better". */
export function directionWords(direction: Criterion['direction']): string {
  return direction === 'min' ? 'lower is better' : 'higher is better'
}

/**
 * Why an alternative has its status, as the words that follow the status word:
 * outside limits → "Capital cost 31.5 £m > 30 £m" (every broken limit, "; " between);
 * dominated → "by North Wall — worse on Capital cost and Homes protected";
 * weakly efficient only → "dominated by North Wall — worse on Homes protected";
 * unsupported → "no slider weighting picks this"; efficient → "" or "same scores as X" for ties.
 * `nameOf` turns an alternative id into its name; unknown criterion ids are shown as they are.
 */
export function statusReason(
  verdict: Pick<AlternativeVerdict, 'status' | 'supported' | 'brokenLimits' | 'dominatedBy' | 'worseOn' | 'tiesWith'>,
  criteria: readonly Criterion[],
  nameOf: (alternativeId: string) => string,
): string {
  const criterionOf = (id: string) => criteria.find(c => c.id === id)
  const criterionName = (id: string) => criterionOf(id)?.name ?? id
  const status = displayStatusOf(verdict)
  switch (status) {
    case 'infeasible':
      return verdict.brokenLimits.map((broken) => {
        const criterion = criterionOf(broken.criterionId) ?? { name: broken.criterionId, unit: '', precision: null }
        const sign = broken.limit === 'highest' ? '>' : '<'
        return `${criterion.name} ${formatScore(broken.value, criterion)} ${sign} ${formatScore(broken.limitValue, criterion)}`
      }).join('; ')
    case 'dominated':
    case 'weakly-efficient': {
      if (!verdict.dominatedBy) return status === 'dominated' ? '' : 'dominated'
      const by = `by ${nameOf(verdict.dominatedBy)}`
      const worse = verdict.worseOn.length > 0 ? ` — worse on ${joinWords(verdict.worseOn.map(criterionName))}` : ''
      return status === 'dominated' ? `${by}${worse}` : `dominated ${by}${worse}`
    }
    case 'unsupported':
      return UNSUPPORTED_REASON
    case 'efficient':
      return verdict.tiesWith.length > 0 ? `same scores as ${joinWords(verdict.tiesWith.map(nameOf))}` : ''
  }
}

/** The status word and its reason in one sentence: "Outside limits: Capital cost 31.5 £m > 30 £m". */
export function statusSentence(
  verdict: Parameters<typeof statusReason>[0],
  criteria: readonly Criterion[],
  nameOf: (alternativeId: string) => string,
): string {
  const entry = STATUS_VOCABULARY[displayStatusOf(verdict)]
  const reason = statusReason(verdict, criteria, nameOf)
  return reason ? `${entry.word}${entry.joiner}${reason}` : entry.word
}

const plural = (n: number, one: string, many: string) => `${formatNumber(n, 0)} ${n === 1 ? one : many}`

/**
 * The counts line: "24 options · 3 outside limits · 12 dominated · 9 efficient". Weakly efficient
 * only is listed when there are any, and unsupported ones in brackets after the efficient count
 * (they are among them).
 */
export function countsLine(counts: Record<AlternativeStatus, number>, unsupported = 0): string {
  const total = counts.infeasible + counts.dominated + counts['weakly-efficient'] + counts.efficient
  const parts = [
    plural(total, 'option', 'options'),
    `${formatNumber(counts.infeasible, 0)} outside limits`,
    `${formatNumber(counts.dominated, 0)} dominated`,
  ]
  if (counts['weakly-efficient'] > 0) parts.push(`${formatNumber(counts['weakly-efficient'], 0)} weakly efficient only`)
  parts.push(`${formatNumber(counts.efficient, 0)} efficient${unsupported > 0 ? ` (${formatNumber(unsupported, 0)} unsupported)` : ''}`)
  return parts.join(' · ')
}
