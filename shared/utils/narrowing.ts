/**
 * The narrowing and the words of a weighing, as plain data for the console, the gallery and the
 * minutes: how many alternatives survive each stage (all → within limits → efficient → favoured
 * → chosen), how many stakeholders have weighed, the group's beam, agreement and dispersion in
 * plain words, weights as whole percentages. Data in, data out; no Vue, no CSS.
 */
import type { Direction } from '../types/decision'
import type { GroupRule } from '../types/engine'
import type { LedgerView } from '../types/ledgerView'
import type { WeighingInfo } from '../types/realtime'
import { formatNumber, joinWords } from '../statusVocabulary'

/**
 * What `GET /api/rooms/[id]/weighings/[weighingId]/results` answers, as the browser receives it.
 * Mirrors `weighingResults` in server/utils/weighings.ts, which app code cannot import.
 */
export interface WeighingResultsView {
  weighing: WeighingInfo
  /** The criteria of the weighing's ledger version, in weight order. */
  criteria: { id: string, name: string, unit: string, direction: Direction, precision?: number | null }[]
  /** The efficient alternatives of that version; `favouredBy` counts weightings (ties share credit). */
  alternatives: { id: string, name: string, favouredBy: number, supported: boolean | null }[]
  /** One per submission, oldest first: the stakeholder's name, or "Stakeholder k" when anonymous. */
  weightings: {
    label: string
    weights: number[]
    favourites: string[]
    runnersUp: string[]
    /** Targets round only: the stakeholder's targets (criterion units and order). */
    aspirations?: number[] | null
    /** Favourites that no weighting of sliders can favour. */
    unsupportedFavourites?: string[]
  }[]
  /** One per group rule; empty when nobody submitted, and in a targets round. `note` says why a rule gave no weights. */
  group: GroupResultView[]
  /** Targets round only: the group's median targets and their favourite (see shared/utils/aspirations.ts). */
  groupTargets?: GroupTargetsView | null
}

export interface GroupTargetsView {
  rule: 'median-targets'
  aspirations: number[]
  favourites: string[]
  runnersUp: string[]
  unsupportedFavourites: string[]
  /** Share of stakeholders whose own favourite is the group's. */
  agreement: number
}

export interface GroupResultView {
  rule: GroupRule
  weights: number[] | null
  dispersion: number | null
  agreement: number | null
  favourites: string[]
  runnersUp: string[]
  note: string | null
}

/** One row of `GET /api/rooms/[id]/weighings` (newest first). */
export type WeighingListEntry = WeighingInfo & { submitted: number }

export const NARROWING_STAGES = ['all', 'within-limits', 'efficient', 'favoured', 'chosen'] as const
export type NarrowingStageKey = (typeof NARROWING_STAGES)[number]

export const NARROWING_LABELS: Readonly<Record<NarrowingStageKey, string>> = {
  'all': 'All alternatives',
  'within-limits': 'Within limits',
  'efficient': 'Efficient',
  'favoured': 'Favoured',
  'chosen': 'Chosen',
}

/** One sentence per stage, for help text and screen readers. */
export const NARROWING_DESCRIPTIONS: Readonly<Record<NarrowingStageKey, string>> = {
  'all': 'Every alternative in the ledger.',
  'within-limits': 'Alternatives that break no hard limit.',
  'efficient': 'Within limits, and no other alternative is at least as good on every criterion and better on one.',
  'favoured': 'Efficient alternatives that at least one stakeholder\'s weighting favours in the latest revealed weighing.',
  'chosen': 'The alternative the room chose.',
}

export interface NarrowingStage {
  key: NarrowingStageKey
  label: string
  /** Null when the stage is not known yet (no analysis, no revealed weighing). */
  count: number | null
  ids: string[]
  names: string[]
  /** Why the count is missing, or where it comes from ("Weighing 2"). */
  note: string
  /** What this stage set aside from the one before: "1 outside limits", "2 dominated"; "" for none or the first. */
  setAside: string
}

/** The alternative the room chose, once a resolution records it. */
export interface ChosenAlternative {
  id: string
  name: string
}

/**
 * The narrowing of a ledger: all alternatives, those within limits, the efficient ones, those
 * favoured by at least one weighting of `results` (most favoured first, ledger order among equals),
 * and the chosen one. The chosen stage is present only when `chosen` is given: nothing is chosen
 * until the room records a resolution. Without an analysis (no alternatives yet, or a ledger that
 * cannot be analysed) the later counts are null; without results the favoured count is null.
 * When the results come from an older ledger version, the note says so. O(n).
 */
export function narrowingOf(
  view: Pick<LedgerView, 'alternatives' | 'analysis' | 'version'> | null,
  results: Pick<WeighingResultsView, 'weighing' | 'alternatives'> | null,
  chosen: ChosenAlternative | null = null,
): NarrowingStage[] {
  const alternatives = view?.alternatives ?? []
  const analysis = view?.analysis ?? null
  const nameOf = new Map(alternatives.map(a => [a.id, a.name]))
  const stage = (key: NarrowingStageKey, ids: string[] | null, { note = '', setAside = '', names }: { note?: string, setAside?: string, names?: string[] } = {}): NarrowingStage => ({
    key,
    label: NARROWING_LABELS[key],
    count: ids === null ? null : ids.length,
    ids: ids ?? [],
    names: names ?? (ids ?? []).map(id => nameOf.get(id) ?? id),
    note,
    setAside,
  })
  const notAnalysed = alternatives.length === 0 ? 'The ledger has no alternatives yet.' : 'The ledger cannot be analysed yet.'
  const counted = (n: number, words: string) => (n > 0 ? `${formatNumber(n, 0)} ${words}` : '')
  const stages = [stage('all', alternatives.map(a => a.id))]
  if (analysis) {
    const { infeasible, dominated } = analysis.counts
    const weakly = analysis.counts['weakly-efficient']
    const notEfficient = dominated > 0 && weakly > 0 ? 'dominated or only weakly efficient' : dominated > 0 ? 'dominated' : 'only weakly efficient'
    stages.push(
      stage('within-limits', analysis.verdicts.filter(v => v.status !== 'infeasible').map(v => v.id), { setAside: counted(infeasible, 'outside limits') }),
      stage('efficient', [...analysis.efficientIds], { setAside: counted(dominated + weakly, notEfficient) }),
    )
  }
  else {
    stages.push(stage('within-limits', null, { note: notAnalysed }), stage('efficient', null, { note: notAnalysed }))
  }
  if (results) {
    const favoured = results.alternatives
      .map((a, order) => ({ ...a, order }))
      .filter(a => a.favouredBy > 0)
      .sort((a, b) => b.favouredBy - a.favouredBy || a.order - b.order)
    const current = view?.version?.number
    const stale = current !== undefined && current !== results.weighing.ledgerVersion
    const note = `Weighing ${results.weighing.number}${stale ? `, on ledger version ${results.weighing.ledgerVersion} (the ledger has changed since)` : ''}`
    const unfavoured = results.alternatives.length - favoured.length
    stages.push(stage('favoured', favoured.map(a => a.id), { note, names: favoured.map(a => a.name), setAside: counted(unfavoured, 'favoured by no weighting') }))
  }
  else {
    stages.push(stage('favoured', null, { note: 'After the first weighing is revealed.' }))
  }
  if (chosen) stages.push(stage('chosen', [chosen.id], { names: [chosen.name] }))
  return stages
}

/**
 * The names to list under a stage in at most `max` lines: all of them when they fit, otherwise the
 * first `max − 1` (the stage's own order) and how many more there are, for an "and 4 more" line.
 * `max` below 1 counts as 1.
 */
export function listedNames(stage: Pick<NarrowingStage, 'names'>, max: number): { names: string[], hidden: number } {
  const lines = Math.max(1, Math.floor(max))
  if (stage.names.length <= lines) return { names: stage.names, hidden: 0 }
  return { names: stage.names.slice(0, lines - 1), hidden: stage.names.length - (lines - 1) }
}

/**
 * "3 of 5 stakeholders have weighed" (or "3 of 5 have weighed" with `short`); "1 of 5 … has
 * weighed"; "No stakeholder is in the room yet" when nobody may weigh. Counts above the number
 * eligible (a stakeholder whose role changed after weighing) are shown as they are.
 */
export function weighedLine(submitted: number, eligible: number, { short = false } = {}): string {
  if (eligible === 0 && submitted === 0) return 'No stakeholder is in the room yet'
  const noun = short ? '' : eligible === 1 ? ' stakeholder' : ' stakeholders'
  return `${formatNumber(submitted, 0)} of ${formatNumber(eligible, 0)}${noun} ${submitted === 1 || (submitted === 0 && eligible === 1) ? 'has' : 'have'} weighed`
}

/** Share weighed, 0 to 1, for a progress bar (0 when nobody may weigh, at most 1). */
export function weighedShare(submitted: number, eligible: number): number {
  return eligible > 0 ? Math.min(1, Math.max(0, submitted / eligible)) : 0
}

/**
 * Weights as whole percentages that add up to exactly 100 (largest remainders get the spare
 * points; ties go to the earlier criterion). Negative or non-finite weights count as 0; all
 * zero (or empty) gives zeros (or []).
 */
export function wholePercentages(weights: readonly number[]): number[] {
  const clean = weights.map(w => (Number.isFinite(w) && w > 0 ? w : 0))
  const total = clean.reduce((a, b) => a + b, 0)
  if (!(total > 0)) return clean.map(() => 0)
  const exact = clean.map(w => (w / total) * 100)
  const floors = exact.map(Math.floor)
  let spare = 100 - floors.reduce((a, b) => a + b, 0)
  const order = exact.map((x, i) => ({ i, rest: x - floors[i]! })).sort((a, b) => b.rest - a.rest || a.i - b.i)
  for (const { i } of order) {
    if (spare <= 0) break
    floors[i]! += 1
    spare -= 1
  }
  return floors
}

export const GROUP_RULE_LABELS: Readonly<Record<GroupRule, string>> = {
  'mean': 'Mean',
  'geometric-mean': 'Geometric mean',
  'median': 'Median',
}

/** What each rule does to unanimity, in a few words for the label beside it. */
export const GROUP_RULE_NOTES: Readonly<Record<GroupRule, string>> = {
  'mean': 'keeps unanimity: if every weighting favours one alternative, so does the group',
  'geometric-mean': 'can break unanimity',
  'median': 'can break unanimity',
}

/** Names of `ids` (in the order given), unknown ids as they are. */
export function namesOf(ids: readonly string[], alternatives: readonly { id: string, name: string }[]): string[] {
  const nameOf = new Map(alternatives.map(a => [a.id, a.name]))
  return ids.map(id => nameOf.get(id) ?? id)
}

/** "North Wall", "North Wall and Tidal Barrier (tied)", or "—" for none. */
export function favouriteWords(ids: readonly string[], alternatives: readonly { id: string, name: string }[]): string {
  if (ids.length === 0) return '—'
  const words = joinWords(namesOf(ids, alternatives))
  return ids.length > 1 ? `${words} (tied)` : words
}

/**
 * How many weightings favour (one of) the group's favourites: a weighting agrees when it shares
 * at least one winner with the group, as the engine's agreement counts it.
 */
export function agreeingCount(weightings: readonly { favourites: readonly string[] }[], groupFavourites: readonly string[]): number {
  const group = new Set(groupFavourites)
  return weightings.filter(w => w.favourites.some(id => group.has(id))).length
}

/** "4 of 5 weightings favour the group's choice"; "1 of 1 weighting favours …"; "" with no weighting. */
export function agreementLine(agreeing: number, total: number): string {
  if (total === 0) return ''
  return `${formatNumber(agreeing, 0)} of ${formatNumber(total, 0)} ${total === 1 ? 'weighting' : 'weightings'} ${agreeing === 1 ? 'favours' : 'favour'} the group's choice`
}

export type DispersionBand = 'close' | 'some' | 'wide'

/**
 * The dispersion (mean total-variation distance between each stakeholder's weights and the
 * group's, 0 to 1) in plain words. It reads as the share of a stakeholder's weight that would
 * have to move, on average, to match the group. Bands: under 10% close, under 25% some, else wide.
 * NaN or negative reads as 0.
 */
export function dispersionWords(dispersion: number): { band: DispersionBand, percent: number, sentence: string } {
  const d = Number.isFinite(dispersion) && dispersion > 0 ? Math.min(1, dispersion) : 0
  const percent = Math.round(d * 100)
  const band: DispersionBand = d < 0.1 ? 'close' : d < 0.25 ? 'some' : 'wide'
  const lead = band === 'close' ? 'The weightings are close together' : band === 'some' ? 'The weightings differ somewhat' : 'The weightings are far apart'
  return { band, percent, sentence: `${lead}: on average ${percent}% of a stakeholder's weight would have to move to match the group's.` }
}

export type FavouredFlag = 'favoured' | 'never-favoured' | 'unsupported'

export interface FavouredRow {
  id: string
  name: string
  favouredBy: number
  supported: boolean | null
  /**
   * 'unsupported': no slider weighting can favour it (so it never is); 'never-favoured': it could
   * be, but no weighting did — a candidate to set aside; 'favoured': at least one weighting did.
   */
  flag: FavouredFlag
}

/** The efficient alternatives of a weighing with how many weightings favour each, most first (result order among equals). */
export function favouredRows(alternatives: WeighingResultsView['alternatives']): FavouredRow[] {
  return alternatives
    .map((a, order) => ({
      row: { ...a, flag: (a.supported === false ? 'unsupported' : a.favouredBy > 0 ? 'favoured' : 'never-favoured') as FavouredFlag },
      order,
    }))
    .sort((a, b) => b.row.favouredBy - a.row.favouredBy || a.order - b.order)
    .map(({ row }) => row)
}

const SHARE_FORMAT = new Intl.NumberFormat('en-GB', { maximumFractionDigits: 2 })

/** "2 weightings", "1 weighting", "1.5 weightings" (tied weightings share their credit). */
export function favouredByWords(count: number): string {
  return `${SHARE_FORMAT.format(count)} ${count === 1 ? 'weighting' : 'weightings'}`
}

/** The group's beam: the favourite on the heavy side, the runner-up on the other; level when tied. */
export interface Beam {
  favourite: string
  runnerUp: string
  /** True when several alternatives share the lead: the beam stays level. */
  level: boolean
}

/** The beam of a group result, or null when it has no favourite (no weights under this rule). */
export function beamOf(group: Pick<GroupResultView, 'favourites' | 'runnersUp'> | null | undefined, alternatives: readonly { id: string, name: string }[]): Beam | null {
  if (!group || group.favourites.length === 0) return null
  const level = group.favourites.length > 1
  return {
    favourite: joinWords(namesOf(level ? group.favourites.slice(0, 1) : group.favourites, alternatives)),
    runnerUp: level ? joinWords(namesOf(group.favourites.slice(1), alternatives)) : joinWords(namesOf(group.runnersUp, alternatives)),
    level,
  }
}

/** The group result for a rule (the mean when no rule is asked for), or null. */
export function groupFor(results: Pick<WeighingResultsView, 'group'> | null | undefined, rule: GroupRule = 'mean'): GroupResultView | null {
  return results?.group.find(g => g.rule === rule) ?? null
}

/**
 * Time left until `closesAt`: null without a time limit; otherwise the whole seconds left (0 once
 * passed) and "4:05 left", "1:02:03 left" or "Time is up". An unreadable date gives null.
 */
export function timeLeft(closesAt: string | null | undefined, nowMs: number): { seconds: number, text: string } | null {
  if (!closesAt) return null
  const end = Date.parse(closesAt)
  if (Number.isNaN(end)) return null
  const seconds = Math.max(0, Math.ceil((end - nowMs) / 1000))
  if (seconds === 0) return { seconds, text: 'Time is up' }
  const h = Math.floor(seconds / 3600)
  const m = Math.floor((seconds % 3600) / 60)
  const s = seconds % 60
  const two = (n: number) => String(n).padStart(2, '0')
  return { seconds, text: `${h > 0 ? `${h}:${two(m)}` : m}:${two(s)} left` }
}

/** The latest revealed weighing in a list that is newest first, or null. */
export function latestRevealed<T extends Pick<WeighingInfo, 'status'>>(list: readonly T[] | null | undefined): T | null {
  return list?.find(w => w.status === 'revealed') ?? null
}

/** The revealed weighing just before `weighingId` in a newest-first list, for comparing rounds; null if none. */
export function revealedBefore<T extends Pick<WeighingInfo, 'id' | 'status' | 'number'>>(list: readonly T[] | null | undefined, weighingId: string): T | null {
  const current = list?.find(w => w.id === weighingId)
  if (!current) return null
  return list!.find(w => w.status === 'revealed' && w.number < current.number) ?? null
}

/**
 * One sentence comparing the group's standing (mean rule) in an earlier weighing with a later one:
 * "In weighing 1 the group favoured North Wall (2 of 3 agreeing); now Tidal Barrier (4 of 5)."
 * Empty when either has no group result.
 */
export function comparisonLine(earlier: WeighingResultsView, later: WeighingResultsView): string {
  // A targets round has no weight-based group; its median targets' favourite stands in.
  const before = groupFor(earlier) ?? earlier.groupTargets ?? null
  const now = groupFor(later) ?? later.groupTargets ?? null
  if (!before || !now || before.favourites.length === 0 || now.favourites.length === 0) return ''
  const was = favouriteWords(before.favourites, earlier.alternatives)
  const is = favouriteWords(now.favourites, later.alternatives)
  const agreedBefore = `${agreeingCount(earlier.weightings, before.favourites)} of ${earlier.weightings.length}`
  const agreedNow = `${agreeingCount(later.weightings, now.favourites)} of ${later.weightings.length}`
  const same = was === is
  return `In weighing ${earlier.weighing.number} the group favoured ${was} (${agreedBefore} agreeing); ${same ? 'it still does' : `now ${is}`} (${agreedNow}).`
}
