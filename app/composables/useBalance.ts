import type { Ref, ShallowRef } from 'vue'
import { useLocalStorage } from '@vueuse/core'
import type { Alternative, Criterion } from '~~/shared/types/decision'
import type { Favourite, LedgerAnalysis, ReferencePointFavourite } from '~~/shared/types/engine'
import type { MySubmission, WeighingInfo } from '~~/shared/types/realtime'
import { aspirationFavourite, aspirationScales, unsupportedAmong } from '~~/shared/utils/aspirations'
import { analyseLedger } from '~~/shared/utils/ledger'
import { largestRemainderPercentages } from '~~/shared/utils/percentages'
import { weightsFromRanking } from '~~/shared/utils/ranking'
import { weightedSumFavourite } from '~~/shared/utils/scalarise'
import { stabilitySentence } from '~~/shared/utils/stabilityWords'
import type { useRoomSocket } from '~/composables/useRoomSocket'

/** Criterion ids, most important first; a nested array is a tie (as `SubmitWeightsBody.ranking`). */
export type CriterionRanking = (string | string[])[]

/** One row of the ranking list: a criterion, and whether it shares the rank of the row above. */
export interface RankItem {
  id: string
  tiedWithAbove: boolean
}

// ---------------------------------------------------------------------------------------------
// Pure helpers (no reactivity): the page and its components call these.

const analyses = new Map<string, LedgerAnalysis | null>()

/**
 * The engine's analysis of one ledger version, computed once per version on this device
 * (versions never change). Support LPs are skipped (the phone would need an LP solver): the
 * supported flags are copied from the server's verdicts when given.
 * Null when the ledger cannot be analysed.
 */
export function analysisOfVersion(
  key: string,
  criteria: readonly Criterion[],
  alternatives: readonly Alternative[],
  verdicts: readonly { id: string, supported: boolean | null }[] = [],
): LedgerAnalysis | null {
  if (!analyses.has(key)) {
    let analysis: LedgerAnalysis | null
    try {
      analysis = analyseLedger(criteria, alternatives, { support: false })
      // Which efficient alternatives a weighted sum can pick comes from the server's analysis.
      const supported = new Map(verdicts.map(v => [v.id, v.supported]))
      for (const verdict of analysis.alternatives) verdict.supported = supported.get(verdict.id) ?? verdict.supported
    }
    catch {
      analysis = null
    }
    analyses.set(key, analysis)
    if (analyses.size > 8) analyses.delete(analyses.keys().next().value!)
  }
  return analyses.get(key) ?? null
}

/**
 * Coupled sliders: criterion k is set to `share` (0–1) and the others share the rest in the
 * proportions they had in `anchor` (the weights when this slider was first touched), which is
 * the path `weightStability` measures along. When k had everything, the rest is shared equally.
 * The result sums to 1 (up to rounding).
 */
export function reweigh(anchor: readonly number[], k: number, share: number): number[] {
  const s = Math.min(1, Math.max(0, share))
  if (anchor.length === 1) return [1]
  const rest = anchor.reduce((sum, w, j) => (j === k ? sum : sum + w), 0)
  return anchor.map((w, j) => {
    if (j === k) return s
    return rest > 1e-12 ? (w * (1 - s)) / rest : (1 - s) / (anchor.length - 1)
  })
}

/** Equal weights for `p` criteria. */
export const equalWeights = (p: number) => Array.from({ length: p }, () => 1 / p)

/** The ranking to submit from the list rows. */
export function rankingOfItems(items: readonly RankItem[]): CriterionRanking {
  const groups: string[][] = []
  items.forEach((item, i) => {
    if (i > 0 && item.tiedWithAbove) groups[groups.length - 1]!.push(item.id)
    else groups.push([item.id])
  })
  return groups.map(g => (g.length === 1 ? g[0]! : g))
}

/** List rows from a ranking; criteria it does not name go to the end, unknown ids are dropped. */
export function itemsOfRanking(ranking: CriterionRanking | null | undefined, criterionIds: readonly string[]): RankItem[] {
  const known = new Set(criterionIds)
  const seen = new Set<string>()
  const items: RankItem[] = []
  for (const entry of ranking ?? []) {
    let first = true
    for (const id of [entry].flat()) {
      if (!known.has(id) || seen.has(id)) continue
      seen.add(id)
      items.push({ id, tiedWithAbove: !first && items.length > 0 })
      first = false
    }
  }
  for (const id of criterionIds) if (!seen.has(id)) items.push({ id, tiedWithAbove: false })
  return items
}

/** Weights in criterion order from the list rows (rank-order centroid; ties share). */
export function weightsOfItems(items: readonly RankItem[], criterionIds: readonly string[]): number[] {
  const rank = new Map<string, number>()
  let group = -1
  items.forEach((item, i) => {
    if (i === 0 || !item.tiedWithAbove) group++
    rank.set(item.id, group)
  })
  return weightsFromRanking(criterionIds.map(id => rank.get(id) ?? group + 1))
}

/**
 * Move the row at `from` to `to`. A moved criterion leaves any tie it was in, and no tie is made
 * by the move: the rows that were tied to it from below, and the row it lands above, become
 * ranks of their own. Ties are only ever made with the "same as above" toggle.
 */
export function moveRankItem(items: readonly RankItem[], from: number, to: number): RankItem[] {
  if (from === to || from < 0 || to < 0 || from >= items.length || to >= items.length) return [...items]
  const next = items.map(item => ({ ...item }))
  if (next[from + 1]) next[from + 1]!.tiedWithAbove = false
  const [moved] = next.splice(from, 1)
  moved!.tiedWithAbove = false
  next.splice(to, 0, moved!)
  if (next[to + 1]) next[to + 1]!.tiedWithAbove = false
  next[0]!.tiedWithAbove = false
  return next
}

/** What the beam shows: names at both ends and the scores (0–1, 1 = best of the shortlist everywhere). */
export interface BeamReading {
  favourites: string[]
  runnersUp: string[]
  favouriteScore: number | null
  runnerUpScore: number | null
}

export function beamReadingOf(analysis: LedgerAnalysis, favourite: Favourite, nameOf: (id: string) => string): BeamReading {
  const ids = analysis.normalised.alternativeIds
  const scoreOf = (id: string | undefined) => (id === undefined ? null : favourite.scores[ids.indexOf(id)] ?? null)
  return {
    favourites: favourite.winners.map(nameOf),
    runnersUp: favourite.runnersUp.map(nameOf),
    favouriteScore: scoreOf(favourite.winners[0]),
    runnerUpScore: scoreOf(favourite.runnersUp[0]),
  }
}

/** Targets in the middle of each criterion's efficient range: where the target sliders start. */
export function middleTargets(analysis: LedgerAnalysis): number[] {
  return aspirationScales(analysis).map(s => (s.efficientLow + s.efficientHigh) / 2)
}

/**
 * What the phone says about the favourite for targets: its beam reading (no 0–100 scores, which
 * belong to weighted sums; the lead is the runner-up's largest shortfall minus the favourite's,
 * on the shortlist's 0–1 scale), the favourites no slider weighting can pick, and a sentence.
 */
export function targetsReadingOf(analysis: LedgerAnalysis, favourite: ReferencePointFavourite, nameOf: (id: string) => string) {
  const ids = analysis.normalised.alternativeIds
  const shortfallOf = (id: string | undefined) => (id === undefined ? null : favourite.scores[ids.indexOf(id)] ?? null)
  const mine = shortfallOf(favourite.winners[0])
  const next = shortfallOf(favourite.runnersUp[0])
  const unsupported = unsupportedAmong(analysis, favourite.winners)
  const names = favourite.winners.map(nameOf)
  const largest = mine === null ? '' : mine <= 0 ? ' It meets every one of your targets.' : ` Its largest shortfall from your targets is ${Math.round(mine * 100)}% of the shortlist's range.`
  const sentence = names.length === 0
    ? ''
    : unsupported.length > 0
      ? `No slider weighting can pick ${unsupported.map(nameOf).join(' or ')}; your targets can.${largest}`
      : `${names.join(' and ')} ${names.length > 1 ? 'are' : 'is'} closest to your targets.${largest}`
  return {
    beam: { favourites: names, runnersUp: favourite.runnersUp.map(nameOf), favouriteScore: null, runnerUpScore: null } satisfies BeamReading,
    lead: mine !== null && next !== null ? next - mine : null,
    unsupported,
    sentence,
  }
}

/** An idempotency key, made once per submission. Works outside secure contexts (no randomUUID). */
export function newSubmissionKey(): string {
  const bytes = crypto.getRandomValues(new Uint8Array(16))
  return `balance-${Array.from(bytes, b => b.toString(16).padStart(2, '0')).join('')}`
}

const sameWeights = (a: readonly number[] | null | undefined, b: readonly number[] | null | undefined) =>
  !!a && !!b && a.length === b.length && a.every((x, k) => Math.abs(x - b[k]!) < 1e-6)

// ---------------------------------------------------------------------------------------------
// The reactive state of one stakeholder's balance.

/** A submission made on this phone and not yet acknowledged by the server. */
export interface PendingSubmission {
  weighingId: string
  idempotencyKey: string
  weights?: number[]
  ranking?: CriterionRanking
  /** Targets round: a target per criterion (criterion units and order). */
  aspirations?: number[]
  madeAt: string
}

/** Slider or ranking positions not sent yet, kept so a reload loses nothing. */
export interface BalanceDraft {
  weights: number[]
  ranking: CriterionRanking | null
  aspirations?: number[] | null
  savedAt: string
}

interface StoredBalance {
  pending: PendingSubmission | null
  draft: BalanceDraft | null
}

export type SubmitState = 'unsent' | 'changed' | 'sending' | 'queued' | 'confirmed' | 'refused'

export interface BalanceOptions {
  roomId: string
  weighing: Ref<WeighingInfo | null>
  criteria: Ref<readonly Criterion[]>
  analysis: Ref<LedgerAnalysis | null>
  nameOf: (id: string) => string
  /** The room's live socket, once the page is mounted. */
  socket: ShallowRef<ReturnType<typeof useRoomSocket> | null>
  /** The caller's own submission (from the first fetch, then from the socket). */
  mine: Ref<MySubmission | null>
}

/**
 * The stakeholder's weights for the open weighing: coupled sliders or a ranking, percentages that
 * sum to 100, the favourite and runner-up computed here with the shared engine, a stability
 * sentence, and a submission that survives going offline and reloading (kept in local storage
 * per room and weighing, sent once the socket is back; the idempotency key keeps a resend from
 * counting twice).
 */
export function useBalance(options: BalanceOptions) {
  const { weighing, criteria, analysis, socket, mine, nameOf } = options
  const criterionIds = computed(() => criteria.value.map(c => c.id))
  const p = computed(() => criteria.value.length)
  const isRanking = computed(() => weighing.value?.inputStyle === 'ranking')
  const isTargets = computed(() => weighing.value?.inputStyle === 'aspirations')

  const stored = useLocalStorage<StoredBalance>(
    () => `counterpoise:balance:${options.roomId}:${weighing.value?.id ?? 'none'}`,
    { pending: null, draft: null },
    { writeDefaults: false, initOnMounted: true, mergeDefaults: true },
  )

  const weights = ref<number[]>([])
  const items = ref<RankItem[]>([])
  /** Targets round: the target of each criterion, in its unit. */
  const targets = ref<number[]>([])
  const scales = computed(() => (analysis.value ? aspirationScales(analysis.value) : []))
  /** The weights when the slider being moved was first touched (see `reweigh`). */
  let anchor: { k: number, weights: number[] } | null = null
  /** Whether the inputs were moved since they were last loaded. */
  let touched = false
  /** The criterion last moved, for the stability sentence. */
  const activeIndex = ref<number | null>(null)
  const sending = ref(false)
  const refusal = ref<string | null>(null)
  const online = useOnline()

  const mineHere = computed(() => (mine.value && mine.value.weighingId === weighing.value?.id ? mine.value : null))

  /** Weights in criterion order, as the engine reads them. */
  const effectiveWeights = computed<number[]>(() => {
    if (p.value === 0) return []
    if (isRanking.value) return items.value.length === p.value ? weightsOfItems(items.value, criterionIds.value) : equalWeights(p.value)
    return weights.value.length === p.value ? weights.value : equalWeights(p.value)
  })
  const percents = computed(() => largestRemainderPercentages(effectiveWeights.value))

  const effectiveTargets = computed<number[]>(() => {
    if (!analysis.value) return []
    return targets.value.length === p.value ? targets.value : middleTargets(analysis.value)
  })

  const favourite = computed<Favourite | null>(() => {
    if (!analysis.value || analysis.value.normalised.n === 0 || effectiveWeights.value.length === 0) return null
    try {
      if (isTargets.value) return aspirationFavourite(analysis.value, effectiveTargets.value)
      return weightedSumFavourite(analysis.value, effectiveWeights.value)
    }
    catch {
      return null
    }
  })
  /** Targets round: the beam, the lead and the sentence for the favourite of the targets. */
  const targetsReading = computed(() => (isTargets.value && analysis.value && favourite.value
    ? targetsReadingOf(analysis.value, favourite.value as ReferencePointFavourite, nameOf)
    : null))
  const beam = computed(() => targetsReading.value?.beam ?? (analysis.value && favourite.value ? beamReadingOf(analysis.value, favourite.value, nameOf) : null))

  const stabilityIndex = computed(() => {
    if (activeIndex.value !== null && activeIndex.value < p.value) return activeIndex.value
    const w = effectiveWeights.value
    return w.length ? w.indexOf(Math.max(...w)) : 0
  })
  const stability = computed(() => targetsReading.value?.sentence ?? (analysis.value && favourite.value ? stabilitySentence(analysis.value, favourite.value, stabilityIndex.value, nameOf) : ''))

  function load(source: { weights?: number[] | null, ranking?: CriterionRanking | null, aspirations?: number[] | null } | null) {
    anchor = null
    touched = false
    activeIndex.value = null
    const ws = source?.weights
    weights.value = ws && ws.length === p.value && ws.some(w => w > 0)
      ? (() => {
          const sum = ws.reduce((a, b) => a + b, 0)
          return ws.map(w => w / sum)
        })()
      : equalWeights(p.value)
    items.value = itemsOfRanking(source?.ranking ?? null, criterionIds.value)
    const ts = source?.aspirations
    targets.value = ts && ts.length === p.value ? [...ts] : (analysis.value ? middleTargets(analysis.value) : [])
  }

  /** Put the newest of: the unsent submission, the unsent draft, the own submission, into the inputs. */
  function restore() {
    if (!weighing.value || p.value === 0) return
    const saved = stored.value
    const candidates: [number, { weights?: number[] | null, ranking?: CriterionRanking | null, aspirations?: number[] | null }][] = []
    if (saved.pending?.weighingId === weighing.value.id) candidates.push([Date.parse(saved.pending.madeAt), saved.pending])
    if (saved.draft) candidates.push([Date.parse(saved.draft.savedAt), saved.draft])
    if (mineHere.value) candidates.push([Date.parse(mineHere.value.submittedAt), mineHere.value])
    candidates.sort((a, b) => b[0] - a[0])
    load(candidates[0]?.[1] ?? null)
  }

  // The analysis is in the key too: target sliders start mid-range, which needs it.
  const inputsKey = computed(() => `${weighing.value?.id ?? ''}:${criterionIds.value.join(',')}:${analysis.value ? 'analysed' : ''}`)
  watch(inputsKey, restore, { immediate: true, flush: 'post' })
  onMounted(restore)
  // A submission confirmed from elsewhere (another tab, a reconnect) shows when nothing is being edited.
  watch(mineHere, (m) => {
    if (m && !touched && !stored.value.pending && !stored.value.draft) load(m)
  })

  /** Slider k moved to `percent` (0–100). */
  function adjust(k: number, percent: number) {
    if (anchor?.k !== k) anchor = { k, weights: [...effectiveWeights.value] }
    weights.value = reweigh(anchor.weights, k, percent / 100)
    touched = true
    activeIndex.value = k
    refusal.value = null
  }
  /** Targets round: criterion k's target moved to `level` (criterion units). */
  function aim(k: number, level: number) {
    const next = [...effectiveTargets.value]
    next[k] = level
    targets.value = next
    touched = true
    activeIndex.value = k
    refusal.value = null
  }
  /** The ranking list changed. */
  function rank(next: RankItem[], movedId?: string) {
    items.value = next
    touched = true
    if (movedId) activeIndex.value = criterionIds.value.indexOf(movedId)
    refusal.value = null
    saveDraft()
  }
  /** A gesture ended: keep the positions so a reload finds them. */
  function saveDraft() {
    const draft: BalanceDraft = { weights: [...effectiveWeights.value], ranking: isRanking.value ? rankingOfItems(items.value) : null, aspirations: isTargets.value ? [...effectiveTargets.value] : null, savedAt: new Date().toISOString() }
    stored.value = { ...stored.value, draft: matchesMine.value ? null : draft }
  }

  const currentBody = computed<{ ranking: CriterionRanking } | { aspirations: number[] } | { weights: number[] }>(() => (isTargets.value
    ? { aspirations: [...effectiveTargets.value] }
    : isRanking.value ? { ranking: rankingOfItems(items.value) } : { weights: [...effectiveWeights.value] }))
  const matches = (sub: { weights?: number[] | null, ranking?: CriterionRanking | null, aspirations?: number[] | null } | null) => {
    if (!sub) return false
    const body = currentBody.value
    if ('aspirations' in body) return !!sub.aspirations && sub.aspirations.length === body.aspirations.length && sub.aspirations.every((x, k) => x === body.aspirations[k])
    if ('ranking' in body) return !!sub.ranking && JSON.stringify(sub.ranking) === JSON.stringify(body.ranking)
    return sameWeights(sub.weights, body.weights)
  }
  const matchesMine = computed(() => matches(mineHere.value))
  const pendingHere = computed(() => (stored.value.pending?.weighingId === weighing.value?.id ? stored.value.pending : null))

  const submitState = computed<SubmitState>(() => {
    if (pendingHere.value) return sending.value ? 'sending' : 'queued'
    if (refusal.value) return 'refused'
    if (mineHere.value) return matchesMine.value ? 'confirmed' : 'changed'
    return 'unsent'
  })
  /** Whether Submit would send something new. */
  const canSubmit = computed(() => {
    if (weighing.value?.status !== 'open' || !favourite.value) return false
    if (pendingHere.value) return !matches(pendingHere.value)
    return !matchesMine.value
  })

  /** Submit the current weights: kept first (so nothing is lost), then sent when the socket can. */
  function submit() {
    if (!weighing.value || !canSubmit.value) return
    refusal.value = null
    stored.value = {
      pending: { weighingId: weighing.value.id, idempotencyKey: newSubmissionKey(), madeAt: new Date().toISOString(), ...currentBody.value },
      draft: null,
    }
    void flush()
  }

  let retry: ReturnType<typeof setTimeout> | undefined
  const retryLater = () => {
    clearTimeout(retry)
    retry = setTimeout(() => void flush(), 4000)
  }
  onScopeDispose(() => clearTimeout(retry))

  /** Send the kept submission, one at a time, until none is left or the connection is gone. */
  async function flush() {
    if (sending.value) return
    for (;;) {
      const pending = stored.value.pending
      const live = socket.value
      if (!pending || !live) return
      if (live.connection.value !== 'connected' || !navigator.onLine) return
      sending.value = true
      let answer: Awaited<ReturnType<typeof live.submit>> | null
      try {
        answer = await live.submit({
          roomId: options.roomId,
          weighingId: pending.weighingId,
          idempotencyKey: pending.idempotencyKey,
          ...(pending.aspirations ? { aspirations: pending.aspirations } : pending.ranking ? { ranking: pending.ranking } : { weights: pending.weights }),
        })
      }
      catch {
        answer = null
      }
      finally {
        sending.value = false
      }
      const stillThisOne = stored.value.pending?.idempotencyKey === pending.idempotencyKey
      if (answer === null || (!answer.ok && (answer.status === 429 || answer.status >= 500))) {
        // No answer in time, or the server is busy: it stays kept and goes again later.
        retryLater()
        return
      }
      if (stillThisOne) stored.value = { ...stored.value, pending: null }
      if (!answer.ok) {
        if (stillThisOne) {
          refusal.value = answer.message
          // Keep what was set, so it can be sent again if that makes sense.
          stored.value = { ...stored.value, draft: { weights: pending.weights ?? [...effectiveWeights.value], ranking: pending.ranking ?? null, aspirations: pending.aspirations ?? null, savedAt: new Date().toISOString() } }
        }
        return
      }
    }
  }

  // Send a kept submission as soon as the connection is back (and after a reload).
  watch(() => socket.value?.connection.value, (state) => {
    if (state === 'connected') void flush()
  })
  watch(online, (isOnline) => {
    if (isOnline) void flush()
  })
  watch(socket, (live) => {
    live?.onJoined(({ mine: joined }) => {
      // An acknowledgement lost with the connection: the server already holds this key.
      const pending = stored.value.pending
      if (pending && joined && joined.idempotencyKey === pending.idempotencyKey) stored.value = { ...stored.value, pending: null }
      void flush()
    })
  })

  return {
    weights: effectiveWeights,
    targets: effectiveTargets,
    scales,
    targetsReading,
    items,
    percents,
    favourite,
    beam,
    stability,
    stabilityIndex,
    activeIndex,
    submitState,
    canSubmit,
    refusal,
    pending: pendingHere,
    mine: mineHere,
    adjust,
    aim,
    rank,
    saveDraft,
    submit,
    flush,
  }
}
