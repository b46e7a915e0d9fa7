import type { LedgerAnalysis, NormalisedTable } from '../types/engine'
import { normalisationError } from './normalise'
import { gamma, normaliseWeights, referencePointFavourite, tableOf } from './scalarise'

/*
 * Stochastic multicriteria acceptability analysis, SMAA-2 (Lahdelma & Salminen, "SMAA-2:
 * Stochastic multicriteria acceptability analysis for group decision making", Operations
 * Research 49(3):444–454, 2001), for exact criterion values and uncertain weights.
 *
 * Weights w are drawn from a region W of the simplex; for each draw every alternative of the
 * table (for an analysis: the efficient ones) is ranked, and
 *  - b[i][r], the rank acceptability, is the share of draws that rank i at rank r + 1;
 *  - a[i] = b[i][0] is the first-rank acceptability;
 *  - the central weight vector of i is the mean weighting among the draws that rank i first.
 * Ties share credit: a tier of m alternatives that tie (within the rounding bounds used by
 * `weightedSumFavourite`) at ranks r … r + m − 1 gives each member 1/m of each of those ranks,
 * so every row and every column of b sums to 1. With a continuous weight law, ties have
 * probability 0 except between alternatives with identical values, which split evenly.
 * Each entry's Monte Carlo standard error is sqrt(b(1 − b)/N) for N draws.
 *
 * Sampling. Uniform on the simplex is Dirichlet(1, …, 1): p independent exponentials −ln(U)
 * divided by their sum (Devroye, "Non-Uniform Random Variate Generation", 1986, ch. V.2 and
 * XI.4). U comes from mulberry32 (Tommy Ettinger, 2017, public domain): a 32-bit state, period
 * 2^32, fine for Monte Carlo of this size and tiny enough to own, so a result can be
 * reproduced from its seed on any engine. We use 1 − U ∈ (0, 1] so the logarithm is finite.
 *
 * Regions.
 *  - 'simplex': every weighting ("any weighting at all").
 *  - 'submitted': the per-criterion range of the submitted weightings. With l_k and u_k the
 *    lowest and highest weight any stakeholder gave criterion k (each weighting first
 *    normalised to sum 1), W = {w in the simplex : l ≤ w ≤ u}, drawn uniformly. Uniform on
 *    {w ≥ l} is exact and cheap (w = l + (1 − Σl)·y with y uniform on the simplex, since that
 *    set is a scaled copy of the simplex); draws with some w_k > u_k are rejected. Criteria
 *    everyone weighted the same (l_k = u_k) are held at that weight. W always holds the
 *    submitted weightings. Fallback: if a draw is rejected MAX_ATTEMPTS times in a row (option
 *    `maxAttempts`; only when W is a sliver of the scaled simplex), that draw is instead a
 *    uniformly random convex combination (Dirichlet(1, …, 1) mixing weights) of the submitted
 *    weightings, which lies in W but is not uniform on it; such draws are counted in
 *    `region.fallbackDraws`.
 *    One stakeholder (or identical weightings) makes W a single point.
 *
 * Models. 'weighted-sum' ranks by Σ w_k·v_ik (higher first). 'reference-point' ranks by the
 * achievement function of `referencePointFavourite` (weighted Tchebycheff shortfall from the
 * aspiration point, ties broken by the total shortfall; lower first), which can rank first
 * efficient alternatives that no weighted sum ever does (unsupported ones).
 */

/** mulberry32 (Tommy Ettinger, 2017, public domain): uniform doubles in [0, 1) from a 32-bit seed. */
export function mulberry32(seed: number): () => number {
  let state = seed >>> 0
  return () => {
    state = (state + 0x6d2b79f5) >>> 0
    let t = state
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

/** Writes a uniform draw from the simplex (Dirichlet(1, …, 1)) of length `out.length` into `out`. */
export function sampleSimplex(random: () => number, out: Float64Array): Float64Array {
  let sum = 0
  for (let k = 0; k < out.length; k++) {
    const e = -Math.log(1 - random())
    out[k] = e
    sum += e
  }
  // All p exponentials are 0 only when every U is 0: probability 2^(−32p). Then take the centre.
  if (sum === 0) out.fill(1 / out.length)
  else for (let k = 0; k < out.length; k++) out[k] = out[k]! / sum
  return out
}

export const ACCEPTABILITY_REGIONS = ['simplex', 'submitted'] as const
export type AcceptabilityRegion = (typeof ACCEPTABILITY_REGIONS)[number]
export const ACCEPTABILITY_MODELS = ['weighted-sum', 'reference-point'] as const
export type AcceptabilityModel = (typeof ACCEPTABILITY_MODELS)[number]

/** Default number of weight draws. */
export const DEFAULT_SAMPLES = 10_000
/** Largest number of draws accepted. */
export const MAX_SAMPLES = 10_000_000
/** Rejections in a row before a 'submitted' draw falls back to mixing the submitted weightings. */
export const MAX_ATTEMPTS = 1000
/** Draws per chunk between `onProgress` calls in `acceptability`. */
export const DEFAULT_CHUNK = 1000

export interface AcceptabilityOptions {
  /** Number of weight draws N (integer, 1 … MAX_SAMPLES). Default DEFAULT_SAMPLES. */
  samples?: number
  /** 32-bit unsigned seed; default a random one (returned in the result). */
  seed?: number
  /** Default 'simplex'. */
  region?: AcceptabilityRegion
  /** The submitted weightings (criterion order, any positive scale); required for 'submitted'. */
  submitted?: readonly ArrayLike<number>[]
  /** Default 'weighted-sum'. */
  model?: AcceptabilityModel
  /** 'reference-point' only: aspiration levels in criterion units and order; default the ideal. */
  aspiration?: ArrayLike<number>
  /** Called after each chunk with the draws done so far and the total. */
  onProgress?: (done: number, total: number) => void
  /** Draws per chunk for `onProgress` (default DEFAULT_CHUNK). */
  chunk?: number
  /** 'submitted' only: rejections in a row before the fallback (default MAX_ATTEMPTS). */
  maxAttempts?: number
}

/** The region the draws came from, when it is the submitted one. */
export interface SubmittedRegionInfo {
  kind: 'submitted'
  /** Lowest submitted weight per criterion (criterion order, each weighting normalised). */
  lower: number[]
  /** Highest submitted weight per criterion. */
  upper: number[]
  stakeholders: number
  /** True when W is a single point (one stakeholder, or all weightings identical). */
  singlePoint: boolean
  /** Draws taken from the fallback (mixing submitted weightings) instead of the uniform law. */
  fallbackDraws: number
  /** Candidate draws made, accepted or not (acceptance rate = samples / attempts). */
  attempts: number
}

export type AcceptabilityRegionInfo = { kind: 'simplex' } | SubmittedRegionInfo

export interface AcceptabilityResult {
  model: AcceptabilityModel
  region: AcceptabilityRegionInfo
  /** The seed that reproduces this result (same source, options and sample count). */
  seed: number
  /** Draws made N. */
  samples: number
  /** Ranked alternatives, table order (for an analysis: the efficient ones). */
  alternativeIds: string[]
  criterionIds: string[]
  /** For an analysis: alternatives that are not efficient; their acceptability is 0 by definition. */
  notEfficientIds: string[]
  /** b[i][r]: share of draws ranking alternative i at rank r + 1 (ties share); rows and columns sum to 1. */
  rankAcceptability: number[][]
  /** Standard error sqrt(b(1 − b)/N) of each entry of `rankAcceptability`. */
  rankError: number[][]
  /** a[i] = b[i][0], the first-rank acceptability. */
  firstRank: number[]
  /** Standard error of `firstRank`. */
  firstRankError: number[]
  /** Mean weighting (criterion order, sums to 1) among draws ranking i first; null when none did. */
  centralWeights: (number[] | null)[]
  /** Standard error of each central weight component (sample s.d. / sqrt(effective count)); null as above. */
  centralWeightError: (number[] | null)[]
}

/** A resumable run: draw in chunks (e.g. inside a worker, posting progress between them). */
export interface AcceptabilityRun {
  readonly total: number
  readonly done: number
  /** Draws up to `count` more weightings (never beyond `total`); returns how many it drew. */
  step(count: number): number
  /** The result over the draws made so far (valid once `done` > 0, or for an empty table). */
  result(): AcceptabilityResult
}

interface RankKey {
  score: Float64Array
  bound: Float64Array
}

function checkedInteger(value: number, name: string, low: number, high: number): number {
  if (typeof value !== 'number' || !Number.isInteger(value) || value < low || value > high) {
    throw new RangeError(`${name} must be a whole number from ${low} to ${high}, but it is ${String(value)}.`)
  }
  return value
}

/** Lower and upper bound per criterion over the normalised submitted weightings. */
function submittedBox(submitted: readonly ArrayLike<number>[] | undefined, p: number) {
  if (submitted === undefined || submitted.length === 0) {
    throw new RangeError('The submitted region needs at least one submitted weighting.')
  }
  const weightings = submitted.map((w, s) => {
    try {
      return normaliseWeights(w, p)
    }
    catch (error) {
      throw new RangeError(`Submitted weighting ${s + 1}: ${(error as Error).message}`, { cause: error })
    }
  })
  const lower = new Float64Array(p).fill(Infinity)
  const upper = new Float64Array(p).fill(-Infinity)
  for (const w of weightings) {
    for (let k = 0; k < p; k++) {
      lower[k] = Math.min(lower[k]!, w[k]!)
      upper[k] = Math.max(upper[k]!, w[k]!)
    }
  }
  return { weightings, lower, upper }
}

/**
 * Starts an SMAA-2 run over the table's alternatives (see the notes at the top of this file);
 * call `step` until `done === total`, then `result()`. The same seed gives the same result
 * however the draws are split into steps. RangeError on a bad sample count, seed, chunk,
 * weighting or aspiration. An empty table draws nothing and gives empty results.
 * Cost per draw O(n·p + n·log n) (one sort of the alternatives); memory O(n²).
 */
export function startAcceptability(source: LedgerAnalysis | NormalisedTable, options: AcceptabilityOptions = {}): AcceptabilityRun {
  const table = tableOf(source)
  const { n, p, values, valueError } = table
  const total = checkedInteger(options.samples ?? DEFAULT_SAMPLES, 'The number of samples', 1, MAX_SAMPLES)
  const seed = options.seed === undefined
    ? Math.floor(Math.random() * 4294967296)
    : checkedInteger(options.seed, 'The seed', 0, 4294967295)
  const regionKind = options.region ?? 'simplex'
  if (!(ACCEPTABILITY_REGIONS as readonly string[]).includes(regionKind)) {
    throw new RangeError(`Unknown region "${String(regionKind)}"; use ${ACCEPTABILITY_REGIONS.join(' or ')}.`)
  }
  const model = options.model ?? 'weighted-sum'
  if (!(ACCEPTABILITY_MODELS as readonly string[]).includes(model)) {
    throw new RangeError(`Unknown model "${String(model)}"; use ${ACCEPTABILITY_MODELS.join(' or ')}.`)
  }
  if (p === 0) throw new RangeError('The table has no criteria to weigh.')

  // Reference point (normalised, 1 = ideal) and its rounding error; validated by the favourite.
  let reference = new Float64Array(p).fill(1)
  const referenceError = new Float64Array(p)
  if (model === 'reference-point') {
    reference = Float64Array.from(referencePointFavourite(table, new Float64Array(p).fill(1), options.aspiration).reference)
    if (options.aspiration !== undefined) {
      for (let k = 0; k < p; k++) {
        if (table.best[k] === table.worst[k]) continue
        referenceError[k] = normalisationError(options.aspiration[k]!, table.best[k]!, table.worst[k]!, table.directions[k]!)
      }
    }
  }

  const random = mulberry32(seed)
  const w = new Float64Array(p)
  const y = new Float64Array(p)

  // Region set-up.
  let regionInfo: AcceptabilityRegionInfo = { kind: 'simplex' }
  let drawWeights: () => void = () => {
    sampleSimplex(random, w)
  }
  if (regionKind === 'submitted') {
    const { weightings, lower, upper } = submittedBox(options.submitted, p)
    const free: number[] = []
    let lowerSum = 0
    for (let k = 0; k < p; k++) {
      lowerSum += lower[k]!
      if (upper[k]! > lower[k]!) free.push(k)
    }
    const slack = Math.max(0, 1 - lowerSum)
    const singlePoint = free.length === 0 || slack === 0
    const info: SubmittedRegionInfo = {
      kind: 'submitted',
      lower: Array.from(lower),
      upper: Array.from(upper),
      stakeholders: weightings.length,
      singlePoint,
      fallbackDraws: 0,
      attempts: 0,
    }
    regionInfo = info
    const maxAttempts = checkedInteger(options.maxAttempts ?? MAX_ATTEMPTS, 'The number of attempts', 1, MAX_SAMPLES)
    const yFree = new Float64Array(free.length)
    const mix = new Float64Array(weightings.length)
    drawWeights = () => {
      if (singlePoint) {
        info.attempts++
        w.set(weightings[0]!)
        return
      }
      for (let attempt = 0; attempt < maxAttempts; attempt++) {
        info.attempts++
        sampleSimplex(random, yFree)
        let inside = true
        for (let j = 0; j < free.length; j++) {
          const k = free[j]!
          y[k] = lower[k]! + slack * yFree[j]!
          if (y[k]! > upper[k]!) {
            inside = false
            break
          }
        }
        if (!inside) continue
        for (let k = 0; k < p; k++) w[k] = upper[k]! > lower[k]! ? y[k]! : lower[k]!
        return
      }
      info.fallbackDraws++
      sampleSimplex(random, mix)
      w.fill(0)
      weightings.forEach((v, s) => {
        for (let k = 0; k < p; k++) w[k] = w[k]! + mix[s]! * v[k]!
      })
    }
  }

  // Accumulators.
  const counts = new Float64Array(n * n)
  const centralSum = new Float64Array(n * p)
  const centralSquares = new Float64Array(n * p)
  const creditSquares = new Float64Array(n)
  const order: number[] = Array.from({ length: n }, (_, i) => i)
  const primary: RankKey = { score: new Float64Array(n), bound: new Float64Array(n) }
  const secondary: RankKey = { score: new Float64Array(n), bound: new Float64Array(n) }
  const higherFirst = model === 'weighted-sum'
  const gSum = gamma(2 * p + 4)
  const gTerm = gamma(p + 5)
  const gTotal = gamma(p + 1)
  let done = 0

  const scoreDraw = () => {
    const s = primary.score
    const b = primary.bound
    if (higherFirst) {
      let inherited = 0
      for (let k = 0; k < p; k++) inherited += w[k]! * valueError[k]!
      for (let i = 0; i < n; i++) {
        let sum = 0
        let magnitude = 0
        const base = i * p
        for (let k = 0; k < p; k++) {
          const term = w[k]! * values[base + k]!
          sum += term
          magnitude += Math.abs(term)
        }
        s[i] = sum
        b[i] = gSum * magnitude + inherited
      }
      return
    }
    // As in referencePointFavourite: Tchebycheff shortfall, then total shortfall.
    for (let i = 0; i < n; i++) {
      let worstTerm = -Infinity
      let worstTermBound = 0
      let totalShortfall = 0
      let totalMagnitude = 0
      let inherited = 0
      const base = i * p
      for (let k = 0; k < p; k++) {
        const shortfall = reference[k]! - values[base + k]!
        const term = w[k]! * shortfall
        const termBound = w[k]! * (valueError[k]! + referenceError[k]!) + gTerm * Math.abs(term)
        if (term > worstTerm) worstTerm = term
        if (termBound > worstTermBound) worstTermBound = termBound
        totalShortfall += shortfall
        totalMagnitude += Math.abs(shortfall)
        inherited += valueError[k]! + referenceError[k]!
      }
      s[i] = worstTerm
      b[i] = worstTermBound
      secondary.score[i] = totalShortfall
      secondary.bound[i] = gTotal * totalMagnitude + inherited
    }
  }

  /** Gives the members order[from … to − 1] equal shares of ranks from … to − 1. */
  const credit = (from: number, to: number) => {
    const m = to - from
    const share = 1 / m
    for (let j = from; j < to; j++) {
      const i = order[j]!
      const row = i * n
      for (let r = from; r < to; r++) counts[row + r] = counts[row + r]! + share
      if (from === 0) {
        creditSquares[i] = creditSquares[i]! + share * share
        for (let k = 0; k < p; k++) {
          centralSum[i * p + k] = centralSum[i * p + k]! + share * w[k]!
          centralSquares[i * p + k] = centralSquares[i * p + k]! + share * w[k]! * w[k]!
        }
      }
    }
  }

  const s1 = primary.score
  const b1 = primary.bound
  const s2 = secondary.score
  const b2 = secondary.bound
  const byPrimary = higherFirst
    ? (a: number, c: number) => s1[c]! - s1[a]!
    : (a: number, c: number) => s1[a]! - s1[c]! || s2[a]! - s2[c]!
  const bySecondary = (a: number, c: number) => s2[a]! - s2[c]!

  /** Splits the sorted order into tiers (ties measured against each tier's first member) and credits them. */
  const rankDraw = () => {
    order.sort(byPrimary)
    let start = 0
    while (start < n) {
      const head = order[start]!
      let end = start + 1
      while (end < n && Math.abs(s1[order[end]!]! - s1[head]!) <= b1[head]! + b1[order[end]!]!) end++
      if (higherFirst || end - start === 1) {
        credit(start, end)
        start = end
        continue
      }
      // Reference point: the primary tier is split again by the total shortfall.
      const tier = order.slice(start, end).sort(bySecondary)
      for (let j = 0; j < tier.length; j++) order[start + j] = tier[j]!
      let sub = start
      while (sub < end) {
        const subHead = order[sub]!
        let subEnd = sub + 1
        while (subEnd < end && Math.abs(s2[order[subEnd]!]! - s2[subHead]!) <= b2[subHead]! + b2[order[subEnd]!]!) subEnd++
        credit(sub, subEnd)
        sub = subEnd
      }
      start = end
    }
  }

  const notEfficientIds = 'normalised' in source
    ? source.alternatives.filter(a => a.status !== 'efficient').map(a => a.id)
    : []

  return {
    total,
    get done() {
      return done
    },
    step(count: number): number {
      checkedInteger(count, 'The chunk size', 0, MAX_SAMPLES)
      const todo = Math.min(count, total - done)
      if (n === 0) {
        done += todo
        return todo
      }
      for (let t = 0; t < todo; t++) {
        drawWeights()
        scoreDraw()
        rankDraw()
      }
      done += todo
      return todo
    },
    result(): AcceptabilityResult {
      const N = done
      const se = (a: number) => (N > 0 ? Math.sqrt(Math.max(0, a * (1 - a)) / N) : 0)
      const rankAcceptability = Array.from({ length: n }, (_, i) =>
        Array.from({ length: n }, (_, r) => (N > 0 ? counts[i * n + r]! / N : 0)))
      const rankError = rankAcceptability.map(row => row.map(se))
      const centralWeights: (number[] | null)[] = []
      const centralWeightError: (number[] | null)[] = []
      for (let i = 0; i < n; i++) {
        const mass = counts[i * n]!
        if (!(mass > 0)) {
          centralWeights.push(null)
          centralWeightError.push(null)
          continue
        }
        // Kish's effective sample size (Σc)²/Σc² for credit-weighted draws.
        const effective = (mass * mass) / creditSquares[i]!
        const mean = Array.from({ length: p }, (_, k) => centralSum[i * p + k]! / mass)
        centralWeights.push(mean)
        centralWeightError.push(mean.map((m, k) => {
          const variance = Math.max(0, centralSquares[i * p + k]! / mass - m * m)
          return Math.sqrt(variance / effective)
        }))
      }
      return {
        model,
        region: regionInfo.kind === 'simplex' ? { kind: 'simplex' } : { ...regionInfo, lower: [...regionInfo.lower], upper: [...regionInfo.upper] },
        seed,
        samples: N,
        alternativeIds: [...table.alternativeIds],
        criterionIds: [...table.criterionIds],
        notEfficientIds,
        rankAcceptability,
        rankError,
        firstRank: rankAcceptability.map(row => row[0] ?? 0),
        firstRankError: rankError.map(row => row[0] ?? 0),
        centralWeights,
        centralWeightError,
      }
    },
  }
}

/**
 * SMAA-2 acceptability of the table's alternatives (for an analysis: the efficient ones), run to
 * completion in chunks of `options.chunk` draws, calling `options.onProgress(done, total)` after
 * each. See `startAcceptability` and the notes at the top of this file.
 */
export function acceptability(source: LedgerAnalysis | NormalisedTable, options: AcceptabilityOptions = {}): AcceptabilityResult {
  const run = startAcceptability(source, options)
  const chunk = checkedInteger(options.chunk ?? DEFAULT_CHUNK, 'The chunk size', 1, MAX_SAMPLES)
  while (run.done < run.total) {
    run.step(chunk)
    options.onProgress?.(run.done, run.total)
  }
  return run.result()
}

/**
 * `acceptability` without holding the thread: yields to the event loop (a zero-delay timer)
 * after every chunk, so a page, a web worker receiving messages or a server stays responsive,
 * and `onProgress` can repaint. Stops with the signal's reason (an AbortError by default)
 * when `signal` is aborted between chunks. Same result as `acceptability` for the same seed.
 */
export async function acceptabilityAsync(
  source: LedgerAnalysis | NormalisedTable,
  options: AcceptabilityOptions & { signal?: AbortSignal } = {},
): Promise<AcceptabilityResult> {
  const run = startAcceptability(source, options)
  const chunk = checkedInteger(options.chunk ?? DEFAULT_CHUNK, 'The chunk size', 1, MAX_SAMPLES)
  while (run.done < run.total) {
    options.signal?.throwIfAborted()
    run.step(chunk)
    options.onProgress?.(run.done, run.total)
    await new Promise<void>(resolve => setTimeout(resolve, 0))
  }
  options.signal?.throwIfAborted()
  return run.result()
}
