/**
 * Pareto dominance core of the decision engine: which alternatives are efficient, weakly
 * efficient or dominated, and by whom.
 *
 * Everything works on a row-major n×p Float64Array in which every criterion is minimised
 * (`canonicalise` negates the maximised ones once). Comparisons are exact: an epsilon would make
 * "dominates" non-transitive, and the narrowing must never depend on the order of the rows.
 *
 * `paretoSets` runs in four stages, each on typed arrays only:
 *  1. Collapse exact duplicates by hashing the score bits (O(n·p) expected), so every copy of a
 *     vector gets the same status and the later stages see unique vectors, where "dominates" is
 *     simply "≤ on every criterion".
 *  2. Pivot prefilter: one efficient pivot row, chosen to dominate as much of the bounding box as
 *     possible, removes in one linear pass every row it dominates (most rows for independent or
 *     correlated data). This is the "pivot point" idea of Lee & Hwang, "BSkyTree: scalable skyline
 *     computation using a balanced pivot selection" (EDBT 2010), used here only as a filter.
 *  3. p = 2: sort-and-sweep (Kung, Luccio & Preparata, "On finding the maxima of a set of
 *     vectors", JACM 1975), O(n log n). p ≥ 3: Sort-Filter-Skyline (Chomicki, Godfrey, Gryz &
 *     Liang, "Skyline with presorting", ICDE 2003): rows sorted by the sum of their scores with a
 *     lexicographic tie-break, so a row can only be dominated by rows before it and the window
 *     holds only final efficient rows. Beyond a few dozen rows the window is kept in static k-d
 *     trees (Bentley, "Multidimensional binary search trees used for associative searching",
 *     CACM 1975) of doubling sizes, merged as in Bentley & Saxe's logarithmic method (J.
 *     Algorithms 1980). Each node keeps the per-criterion minimum ("ideal point") and maximum
 *     ("nadir point") of its rows, as in the ND-Tree of Jaszkiewicz & Lust (IEEE TEVC 2018): a
 *     subtree whose ideal point is worse than the candidate somewhere holds no dominator, and one
 *     whose nadir point is no worse anywhere holds only dominators. Anti-correlated 10^5 × 6
 *     sets (front ≈ half the rows) take under a second on a quiet machine this way, where a
 *     linear window needs ~10^9 dominance tests (tests/bench/engine.bench.ts).
 *  4. Weak efficiency of the dominated rows, checked against the efficient rows only (see
 *     `markWeaklyEfficient` for why that is enough).
 */
import type { Direction } from '../types/decision'

/** Rows above which the pivot prefilter pays for its two linear passes. */
const PREFILTER_MIN_ROWS = 64
/** Rows above which the radix sort beats a comparator sort. */
const RADIX_MIN_ROWS = 512
/** Efficient rows Sort-Filter-Skyline scans linearly before they are merged into a k-d tree. */
const WINDOW_BUFFER = 32
/** Efficient rows above which the weak-efficiency check uses a k-d tree instead of a scan. */
const TREE_MIN_FRONT = 64
/** Most points in a k-d tree leaf. */
const LEAF_SIZE = 16

// Status of a unique vector; 0 = not decided yet.
const STATUS_EFFICIENT = 1
const STATUS_DOMINATED = 2

function checkShape(n: number, p: number): void {
  if (!Number.isInteger(p) || p < 1) throw new RangeError(`p must be a positive integer, got ${p}`)
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`n must be a non-negative integer, got ${n}`)
}

function nonFinite(row: number, column: number, value: unknown): RangeError {
  return new RangeError(`score at row ${row}, column ${column} is ${String(value)}; scores must be finite numbers`)
}

/**
 * Row-major n×p copy of `scores` in which every criterion is minimised: columns whose direction
 * is `max` are negated once, so "lower is better" everywhere. −0 becomes +0, so equal scores stay
 * bit-identical. O(n·p).
 * @throws RangeError when a score is NaN, ±Infinity or not a number (the message names row and
 * column), when `scores` does not hold exactly n·p values, when `directions` does not have p
 * entries of `min`/`max`, or when p < 1.
 */
export function canonicalise(
  scores: ArrayLike<number>,
  n: number,
  p: number,
  directions: readonly Direction[],
): Float64Array {
  checkShape(n, p)
  if (scores.length !== n * p) throw new RangeError(`expected ${n}×${p} = ${n * p} scores, got ${scores.length}`)
  if (directions.length !== p) throw new RangeError(`expected ${p} directions, got ${directions.length}`)
  const negate = new Uint8Array(p)
  for (let d = 0; d < p; d++) {
    const direction = directions[d]
    if (direction !== 'min' && direction !== 'max') {
      throw new RangeError(`direction of column ${d} must be 'min' or 'max', got ${String(direction)}`)
    }
    negate[d] = direction === 'max' ? 1 : 0
  }
  const canon = new Float64Array(n * p)
  for (let i = 0; i < n; i++) {
    const base = i * p
    for (let d = 0; d < p; d++) {
      const v = scores[base + d]
      if (typeof v !== 'number' || !Number.isFinite(v)) throw nonFinite(i, d, v)
      // 0 - v and v + 0 both turn −0 into +0.
      canon[base + d] = negate[d] === 1 ? 0 - v : v + 0
    }
  }
  return canon
}

/**
 * true when row i dominates row j in a canonical (all-minimised) matrix: no worse on every
 * criterion and strictly better on at least one. Equal rows never dominate each other; NaN
 * compares as "neither better nor worse", so validate with `canonicalise` first. O(p).
 * @throws RangeError when p < 1.
 */
export function dominates(canon: Float64Array, p: number, i: number, j: number): boolean {
  if (!(p >= 1)) throw new RangeError(`p must be a positive integer, got ${p}`)
  const a = i * p
  const b = j * p
  let strict = false
  for (let d = 0; d < p; d++) {
    const x = canon[a + d]!
    const y = canon[b + d]!
    if (x > y) return false
    if (x < y) strict = true
  }
  return strict
}

/**
 * true when row i is strictly better than row j on every criterion (canonical matrix). Implies
 * `dominates(canon, p, i, j)`. O(p).
 * @throws RangeError when p < 1.
 */
export function strictlyDominates(canon: Float64Array, p: number, i: number, j: number): boolean {
  if (!(p >= 1)) throw new RangeError(`p must be a positive integer, got ${p}`)
  const a = i * p
  const b = j * p
  for (let d = 0; d < p; d++) {
    if (!(canon[a + d]! < canon[b + d]!)) return false
  }
  return true
}

export interface ParetoSets {
  /** 1 where the row is efficient among the considered rows (not dominated by any considered row). Exact duplicates share status. */
  efficient: Uint8Array
  /** 1 where no considered row is strictly better on every criterion (efficient ⊆ weaklyEfficient). */
  weaklyEfficient: Uint8Array
  /** For a dominated considered row: index of an EFFICIENT row that dominates it; −1 otherwise (efficient or not considered). */
  dominator: Int32Array
  /** For each row, the smallest index of a row with an identical score vector (itself when unique); −1 for rows not considered. */
  duplicateOf: Int32Array
  /** Number of efficient rows. */
  efficientCount: number
}

function checkInputs(canon: Float64Array, n: number, p: number, consider: Uint8Array | undefined): void {
  checkShape(n, p)
  if (canon.length < n * p) throw new RangeError(`expected at least ${n * p} scores, got ${canon.length}`)
  if (consider !== undefined && consider.length < n) {
    throw new RangeError(`consider has ${consider.length} entries for ${n} rows`)
  }
}

function emptySets(n: number): ParetoSets {
  return {
    efficient: new Uint8Array(n),
    weaklyEfficient: new Uint8Array(n),
    dominator: new Int32Array(n).fill(-1),
    duplicateOf: new Int32Array(n).fill(-1),
    efficientCount: 0,
  }
}

/**
 * Efficient and weakly efficient sets of the rows where `consider[i] === 1` (all rows when
 * `consider` is omitted; the caller excludes infeasible rows this way), with an efficient
 * dominator for every dominated row and the duplicate groups. Exact comparisons, no epsilon;
 * equal vectors never dominate each other, so every copy of an efficient vector is efficient
 * (with p = 1, every copy of the minimum). n = 0 gives empty arrays.
 *
 * Cost: O(n·p) expected for hashing and prefiltering, then O(s log s) sorting of the s rows the
 * prefilter keeps, plus the dominance tests of Sort-Filter-Skyline (p ≥ 3; far below s·front
 * thanks to the k-d tree) or a linear sweep (p = 2). Extra memory O(n·p).
 * @throws RangeError when p < 1, the shapes disagree, or a considered score is NaN/±Infinity
 * (naming row and column).
 */
export function paretoSets(canon: Float64Array, n: number, p: number, consider?: Uint8Array): ParetoSets {
  checkInputs(canon, n, p, consider)
  if (n === 0) return emptySets(0)

  const groupOf = new Int32Array(n)
  const { reps, lowest, highest } = collapseDuplicates(canon, n, p, consider, groupOf)
  const m = reps.length
  const status = new Uint8Array(m)
  const witness = new Int32Array(m).fill(-1)
  // 1 once a dominated vector is known to be strictly dominated (so not weakly efficient).
  const strictlyDominated = new Uint8Array(m)

  if (p === 1) minimumOnly(canon, reps, status, witness, strictlyDominated)
  else if (m > 0) {
    let noStrictDominance = false
    for (let d = 0; d < p; d++) if (lowest[d] === highest[d]) noStrictDominance = true
    let survivors: Int32Array
    if (m >= PREFILTER_MIN_ROWS) survivors = pivotPrefilter(canon, p, reps, lowest, highest, status, witness, strictlyDominated)
    else {
      survivors = new Int32Array(m)
      for (let k = 0; k < m; k++) survivors[k] = k
    }
    if (p === 2) sweepTwoCriteria(canon, reps, survivors, status, witness, strictlyDominated)
    else sortFilterSkyline(canon, p, reps, survivors, status, witness, strictlyDominated)
    markWeaklyEfficient(canon, p, reps, status, strictlyDominated, noStrictDominance)
  }

  return spreadToRows(groupOf, reps, status, witness, strictlyDominated)
}

/*
 * Implementation note: each hot loop lives in its own small function. V8 optimises a long loop
 * while it runs (on-stack replacement); a function holding several such loops is deoptimised
 * each time it reaches a loop it has no type feedback for yet, which made the first few calls on
 * 10^6 rows several times slower than later ones.
 */

/** Every row's result from its vector's (each output written once, so no pre-filling). */
function spreadToRows(
  groupOf: Int32Array,
  reps: Int32Array,
  status: Uint8Array,
  witness: Int32Array,
  strictlyDominated: Uint8Array,
): ParetoSets {
  const n = groupOf.length
  const efficient = new Uint8Array(n)
  const weaklyEfficient = new Uint8Array(n)
  const dominator = new Int32Array(n)
  const duplicateOf = new Int32Array(n)
  let efficientCount = 0
  for (let i = 0; i < n; i++) {
    const g = groupOf[i]!
    if (g < 0) {
      dominator[i] = -1
      duplicateOf[i] = -1
      continue
    }
    duplicateOf[i] = reps[g]!
    if (status[g] === STATUS_EFFICIENT) {
      efficient[i] = 1
      weaklyEfficient[i] = 1
      dominator[i] = -1
      efficientCount++
    }
    else {
      weaklyEfficient[i] = strictlyDominated[g] === 1 ? 0 : 1
      dominator[i] = reps[witness[g]!]!
    }
  }
  return { efficient, weaklyEfficient, dominator, duplicateOf, efficientCount }
}

/**
 * Groups the considered rows by exact score vector. Returns the representative (smallest) row of
 * each group in increasing order and writes each row's group into `groupOf` (−1 when not
 * considered). Rows are hashed on their IEEE bits (−0 folded into +0); no key strings or per-row
 * objects are built. Also validates the scores and returns the per-criterion range of the
 * considered rows.
 */
function collapseDuplicates(
  canon: Float64Array,
  n: number,
  p: number,
  consider: Uint8Array | undefined,
  groupOf: Int32Array,
): { reps: Int32Array, lowest: Float64Array, highest: Float64Array } {
  const count = consider === undefined ? n : countConsidered(consider, n)
  const lowest = new Float64Array(p).fill(Infinity)
  const highest = new Float64Array(p).fill(-Infinity)
  const hashes = new Uint32Array(count)
  const rowAt = new Int32Array(count)
  hashRows(canon, n, p, consider, hashes, rowAt, groupOf, lowest, highest)

  // groupOf now holds each considered row itself as its provisional representative. Rows are
  // split by the top hash bits into cache-sized partitions (one stable scatter pass), and each
  // partition is deduplicated with a small open-addressing table that stays in cache; a single
  // table over 10^6 rows would cost a cache miss per row.
  let partitionBits = 0
  while (partitionBits < 16 && count >>> partitionBits > 512) partitionBits++
  const partitions = 1 << partitionBits
  const partitionStart = new Int32Array(partitions + 1)
  let sortedHash = hashes
  let sortedRow = rowAt
  if (partitionBits > 0) {
    countPartitions(hashes, partitionBits, partitionStart)
    sortedHash = new Uint32Array(count)
    sortedRow = new Int32Array(count)
    scatterPartitions(hashes, rowAt, partitionBits, partitionStart, sortedHash, sortedRow)
  }
  else partitionStart[1] = count
  linkDuplicates(canon, p, partitionStart, sortedHash, sortedRow, groupOf)
  const reps = new Int32Array(count)
  const m = numberGroups(groupOf, reps)
  return { reps: reps.subarray(0, m), lowest, highest }
}

function countConsidered(consider: Uint8Array, n: number): number {
  let count = 0
  for (let i = 0; i < n; i++) if (consider[i] === 1) count++
  return count
}

/** Validates and hashes the considered rows (−0 hashed as +0) and tracks each criterion's range. */
function hashRows(
  canon: Float64Array,
  n: number,
  p: number,
  consider: Uint8Array | undefined,
  hashes: Uint32Array,
  rowAt: Int32Array,
  groupOf: Int32Array,
  lowest: Float64Array,
  highest: Float64Array,
): void {
  // Endianness does not matter: both 32-bit halves of each score go into the hash.
  const bits = new Uint32Array(canon.buffer, canon.byteOffset, n * p * 2)
  let c = 0
  for (let i = 0; i < n; i++) {
    if (consider !== undefined && consider[i] !== 1) {
      groupOf[i] = -1
      continue
    }
    const base = i * p
    let h = 0x2545f491
    for (let d = 0; d < p; d++) {
      const v = canon[base + d]!
      if (v - v !== 0) throw nonFinite(i, d, v)
      if (v < lowest[d]!) lowest[d] = v
      if (v > highest[d]!) highest[d] = v
      if (v !== 0) {
        h = Math.imul(h ^ bits[2 * (base + d)]!, 0x9e3779b1)
        h = Math.imul(h ^ bits[2 * (base + d) + 1]!, 0x85ebca77)
        h ^= h >>> 15
      }
      else h = Math.imul(h ^ 0x5bd1e995, 0x9e3779b1)
    }
    h ^= h >>> 16
    h = Math.imul(h, 0x7feb352d)
    h ^= h >>> 15
    hashes[c] = h >>> 0
    rowAt[c] = i
    groupOf[i] = i
    c++
  }
}

/** partitionStart[q + 1] = rows in partition q, then prefix sums. */
function countPartitions(hashes: Uint32Array, partitionBits: number, partitionStart: Int32Array): void {
  const shift = 32 - partitionBits
  for (let t = 0; t < hashes.length; t++) partitionStart[(hashes[t]! >>> shift) + 1]!++
  for (let q = 1; q < partitionStart.length; q++) partitionStart[q] = partitionStart[q]! + partitionStart[q - 1]!
}

/** Stable scatter of (hash, row) into partition order. */
function scatterPartitions(
  hashes: Uint32Array,
  rowAt: Int32Array,
  partitionBits: number,
  partitionStart: Int32Array,
  sortedHash: Uint32Array,
  sortedRow: Int32Array,
): void {
  const shift = 32 - partitionBits
  const next = partitionStart.slice(0, partitionStart.length - 1)
  for (let t = 0; t < hashes.length; t++) {
    const h = hashes[t]!
    const to = next[h >>> shift]!++
    sortedHash[to] = h
    sortedRow[to] = rowAt[t]!
  }
}

/** Points every repeated vector's later rows (groupOf) at its first row, one partition at a time. */
function linkDuplicates(
  canon: Float64Array,
  p: number,
  partitionStart: Int32Array,
  sortedHash: Uint32Array,
  sortedRow: Int32Array,
  groupOf: Int32Array,
): void {
  let largest = 0
  for (let q = 1; q < partitionStart.length; q++) largest = Math.max(largest, partitionStart[q]! - partitionStart[q - 1]!)
  let tableSize = 2
  while (tableSize < largest * 2) tableSize *= 2
  const table = new Int32Array(tableSize) // position in the partition + 1, 0 = empty
  for (let q = 1; q < partitionStart.length; q++) {
    const from = partitionStart[q - 1]!
    const to = partitionStart[q]!
    let size = 2
    while (size < (to - from) * 2) size *= 2
    const mask = size - 1
    table.fill(0, 0, size)
    for (let t = from; t < to; t++) {
      const h = sortedHash[t]!
      const row = sortedRow[t]!
      let slot = h & mask
      for (;;) {
        const entry = table[slot]!
        if (entry === 0) {
          table[slot] = t - from + 1
          break
        }
        const other = from + entry - 1
        // Rows arrive in increasing order within a partition, so the stored one is the smaller.
        if (sortedHash[other] === h && rowsEqual(canon, sortedRow[other]! * p, row * p, p)) {
          groupOf[row] = sortedRow[other]!
          break
        }
        slot = (slot + 1) & mask
      }
    }
  }
}

/** Turns groupOf from "first row of my vector" into a vector number, listing first rows in reps. Returns the count. */
function numberGroups(groupOf: Int32Array, reps: Int32Array): number {
  let m = 0
  for (let i = 0; i < groupOf.length; i++) {
    const rep = groupOf[i]!
    if (rep < 0) continue
    if (rep === i) {
      reps[m] = i
      groupOf[i] = m++
    }
    else groupOf[i] = groupOf[rep]! // rep < i, already renumbered
  }
  return m
}

function rowsEqual(a: Float64Array, offA: number, offB: number, p: number): boolean {
  for (let d = 0; d < p; d++) if (a[offA + d] !== a[offB + d]) return false
  return true
}

/** p = 1: the single smallest vector is efficient; it strictly dominates every other vector. */
function minimumOnly(
  canon: Float64Array,
  reps: Int32Array,
  status: Uint8Array,
  witness: Int32Array,
  strictlyDominated: Uint8Array,
): void {
  const m = reps.length
  if (m === 0) return
  let best = 0
  for (let k = 1; k < m; k++) if (canon[reps[k]!]! < canon[reps[best]!]!) best = k
  for (let k = 0; k < m; k++) {
    if (k === best) status[k] = STATUS_EFFICIENT
    else {
      status[k] = STATUS_DOMINATED
      witness[k] = best
      strictlyDominated[k] = 1
    }
  }
}

/**
 * Chooses a pivot and marks every vector it dominates. The first pivot maximises the volume of
 * the bounding box it dominates (product of (max − x) / (max − min) over the criteria). The
 * filtering pass replaces the pivot by any vector that dominates it, which keeps every witness
 * valid by transitivity and leaves an efficient pivot at the end: a vector seen before the last
 * replacement that dominated the final pivot would have dominated the pivot of its time and been
 * taken. Witnesses that were replaced pivots are then moved down the chain to the final one.
 * Returns the undecided vectors, the final pivot among them.
 */
function pivotPrefilter(
  canon: Float64Array,
  p: number,
  reps: Int32Array,
  lowest: Float64Array,
  highest: Float64Array,
  status: Uint8Array,
  witness: Int32Array,
  strictlyDominated: Uint8Array,
): Int32Array {
  const { offset, slope } = boxWeights(lowest, highest)
  const firstPivot = largestDominatedBox(canon, p, reps, offset, slope)
  const survivors = new Int32Array(reps.length)
  const survivorCount = filterByPivot(canon, p, reps, firstPivot, status, witness, strictlyDominated, survivors)
  if (status[firstPivot] === STATUS_DOMINATED) resolveWitnessChains(status, witness)
  return survivors.subarray(0, survivorCount)
}

/**
 * Weights of the dominated-box volume Π_d (offset[d] − slope[d]·x_d), where each factor is
 * (max − x) / (max − min), or 1 for a constant criterion. Halved terms so that max − min cannot
 * overflow for scores near ±1.8e308; pivots only steer speed, so rounding cannot change a result.
 */
function boxWeights(lowest: Float64Array, highest: Float64Array): { offset: Float64Array, slope: Float64Array } {
  const p = lowest.length
  const offset = new Float64Array(p).fill(1)
  const slope = new Float64Array(p)
  for (let d = 0; d < p; d++) {
    if (lowest[d] === highest[d]) continue
    const scale = 1 / (highest[d]! / 2 - lowest[d]! / 2)
    offset[d] = (highest[d]! / 2) * scale
    slope[d] = scale / 2
  }
  return { offset, slope }
}

function largestDominatedBox(canon: Float64Array, p: number, reps: Int32Array, offset: Float64Array, slope: Float64Array): number {
  let pivot = 0
  let bestVolume = -Infinity
  for (let k = 0; k < reps.length; k++) {
    const base = reps[k]! * p
    let volume = 1
    for (let d = 0; d < p; d++) volume *= offset[d]! - slope[d]! * canon[base + d]!
    if (volume > bestVolume) {
      bestVolume = volume
      pivot = k
    }
  }
  return pivot
}

/** The filtering pass of `pivotPrefilter`; returns the number of survivors written (the final pivot last). */
function filterByPivot(
  canon: Float64Array,
  p: number,
  reps: Int32Array,
  firstPivot: number,
  status: Uint8Array,
  witness: Int32Array,
  strictlyDominated: Uint8Array,
  survivors: Int32Array,
): number {
  let pivot = firstPivot
  let q = reps[pivot]! * p
  let survivorCount = 0
  for (let k = 0; k < reps.length; k++) {
    if (k === pivot) continue
    const base = reps[k]! * p
    let d = 0
    let strict = true
    for (; d < p; d++) {
      const a = canon[q + d]!
      const b = canon[base + d]!
      if (a > b) break
      if (a === b) strict = false
    }
    if (d === p) {
      status[k] = STATUS_DOMINATED
      witness[k] = pivot
      strictlyDominated[k] = strict ? 1 : 0
      continue
    }
    if (noWorseEverywhere(canon, base, q, p)) {
      // k dominates the pivot: the old pivot is dominated by k and k becomes the pivot.
      status[pivot] = STATUS_DOMINATED
      witness[pivot] = k
      strictlyDominated[pivot] = strictlyBetter(canon, base, q, p) ? 1 : 0
      pivot = k
      q = base
      continue
    }
    survivors[survivorCount++] = k
  }
  survivors[survivorCount++] = pivot
  return survivorCount
}

/** Moves every witness down the chain of replaced pivots to the final, efficient one. */
function resolveWitnessChains(status: Uint8Array, witness: Int32Array): void {
  for (let k = 0; k < witness.length; k++) {
    let w = witness[k]!
    if (w < 0) continue
    while (status[w] === STATUS_DOMINATED) w = witness[w]!
    witness[k] = w
  }
}

/** Row at offA ≤ row at offB on every criterion (for distinct vectors: offA dominates offB). */
function noWorseEverywhere(a: Float64Array, offA: number, offB: number, p: number): boolean {
  for (let d = 0; d < p; d++) if (a[offA + d]! > a[offB + d]!) return false
  return true
}

/**
 * Copies the `survivors` rows into a compact matrix ordered by `key` ascending (key[k] belongs to
 * survivors[k]; it must not be −0), ties broken lexicographically. Returns the matrix and, per
 * position, the vector index.
 */
function sortedCopy(
  canon: Float64Array,
  p: number,
  reps: Int32Array,
  survivors: Int32Array,
  key: Float64Array,
): { rows: Float64Array, vectorAt: Int32Array } {
  const sorted = sortByKey(key, survivors)
  breakTiesLexicographically(canon, p, reps, sorted.key, sorted.payload)
  const rows = gatherRows(canon, p, reps, sorted.payload)
  return { rows, vectorAt: sorted.payload }
}

function breakTiesLexicographically(canon: Float64Array, p: number, reps: Int32Array, sortedKey: Float64Array, vectorAt: Int32Array): void {
  const s = sortedKey.length
  const lexicographic = (a: number, b: number): number => {
    const oa = reps[a]! * p
    const ob = reps[b]! * p
    for (let d = 0; d < p; d++) {
      const diff = canon[oa + d]! - canon[ob + d]!
      if (diff !== 0) return diff < 0 ? -1 : 1
    }
    return 0
  }
  for (let start = 0; start < s;) {
    const value = sortedKey[start]!
    let end = start + 1
    while (end < s && sortedKey[end] === value) end++
    if (end - start > 1) vectorAt.subarray(start, end).sort(lexicographic)
    start = end
  }
}

function gatherRows(canon: Float64Array, p: number, reps: Int32Array, vectorAt: Int32Array): Float64Array {
  const rows = new Float64Array(vectorAt.length * p)
  for (let t = 0; t < vectorAt.length; t++) {
    const from = reps[vectorAt[t]!]! * p
    for (let d = 0; d < p; d++) rows[t * p + d] = canon[from + d]!
  }
  return rows
}

const LITTLE_ENDIAN = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1
const HI_WORD = LITTLE_ENDIAN ? 1 : 0
const LO_WORD = 1 - HI_WORD

/**
 * Copies of `key` and `payload` ordered by key ascending (equal keys in any order). Stable LSD
 * radix sort on the 64-bit IEEE pattern mapped to an unsigned order (6 passes of 11 bits; a pass
 * whose digit every key shares is skipped), moving keys and payload together so that every pass
 * reads sequentially; 10^6 keys take tens of milliseconds where a comparator sort takes most of
 * a second. Small inputs use the built-in comparator sort. No NaN keys.
 */
function sortByKey(key: Float64Array, payload: Int32Array): { key: Float64Array, payload: Int32Array } {
  const s = key.length
  if (s < RADIX_MIN_ROWS) {
    const order = new Int32Array(s)
    for (let i = 0; i < s; i++) order[i] = i
    order.sort((a, b) => key[a]! - key[b]!)
    const sortedKey = new Float64Array(s)
    const sortedPayload = new Int32Array(s)
    for (let i = 0; i < s; i++) {
      sortedKey[i] = key[order[i]!]!
      sortedPayload[i] = payload[order[i]!]!
    }
    return { key: sortedKey, payload: sortedPayload }
  }
  let current = key.slice()
  let next = new Float64Array(s)
  let currentPayload = payload.slice()
  let nextPayload = new Int32Array(s)
  const counts = radixHistograms(current)
  for (let pass = 0; pass < 6; pass++) {
    const base = pass * 2048
    let sum = 0
    let skip = false
    for (let digit = 0; digit < 2048; digit++) {
      const c = counts[base + digit]!
      if (c === s) skip = true
      counts[base + digit] = sum
      sum += c
    }
    if (skip) continue
    radixScatter(current, currentPayload, next, nextPayload, counts, pass)
    const swapKey = current
    current = next
    next = swapKey
    const swapPayload = currentPayload
    currentPayload = nextPayload
    nextPayload = swapPayload
  }
  return { key: current, payload: currentPayload }
}

/**
 * The 11-bit digit `pass` (0 = lowest) of a float's order-preserving unsigned pattern: negative
 * floats get all bits flipped, positive ones the sign bit.
 */
function radixDigit(hi: number, lo: number, pass: number): number {
  let h = hi
  let l = lo
  if (h >>> 31) {
    h = ~h
    l = ~l
  }
  else h |= 0x80000000
  switch (pass) {
    case 0: return l & 2047
    case 1: return (l >>> 11) & 2047
    case 2: return ((l >>> 22) | (h << 10)) & 2047
    case 3: return (h >>> 1) & 2047
    case 4: return (h >>> 12) & 2047
    default: return (h >>> 23) & 511
  }
}

function radixHistograms(key: Float64Array): Int32Array {
  const bits = new Uint32Array(key.buffer, key.byteOffset, key.length * 2)
  const counts = new Int32Array(6 * 2048)
  for (let i = 0; i < key.length; i++) {
    const hi = bits[2 * i + HI_WORD]!
    const lo = bits[2 * i + LO_WORD]!
    for (let pass = 0; pass < 6; pass++) counts[pass * 2048 + radixDigit(hi, lo, pass)]!++
  }
  return counts
}

function radixScatter(key: Float64Array, payload: Int32Array, nextKey: Float64Array, nextPayload: Int32Array, counts: Int32Array, pass: number): void {
  const bits = new Uint32Array(key.buffer, key.byteOffset, key.length * 2)
  const base = pass * 2048
  for (let i = 0; i < key.length; i++) {
    const to = counts[base + radixDigit(bits[2 * i + HI_WORD]!, bits[2 * i + LO_WORD]!, pass)]!++
    nextKey[to] = key[i]!
    nextPayload[to] = payload[i]!
  }
}

/**
 * p = 2 sort-and-sweep (Kung, Luccio & Preparata 1975). In lexicographic order a vector is
 * dominated exactly when an earlier one is no worse on the second criterion, and the first
 * vector to reach the running minimum of that criterion is efficient, so it serves as witness.
 * Strict dominance needs a strictly smaller first criterion, so a second minimum is kept over
 * the runs of equal first criterion already closed.
 */
function sweepTwoCriteria(
  canon: Float64Array,
  reps: Int32Array,
  survivors: Int32Array,
  status: Uint8Array,
  witness: Int32Array,
  strictlyDominated: Uint8Array,
): void {
  const s = survivors.length
  const key = new Float64Array(s)
  // + 0 folds −0 into +0 so that equal first scores form one run.
  for (let k = 0; k < s; k++) key[k] = canon[reps[survivors[k]!]! * 2]! + 0
  const { rows, vectorAt } = sortedCopy(canon, 2, reps, survivors, key)
  sweepSorted(rows, vectorAt, status, witness, strictlyDominated)
}

function sweepSorted(rows: Float64Array, vectorAt: Int32Array, status: Uint8Array, witness: Int32Array, strictlyDominated: Uint8Array): void {
  const s = vectorAt.length
  let best = -1
  let bestSecond = Infinity
  let closedMin = Infinity // min of the second criterion over rows with a smaller first criterion
  let runMin = Infinity
  let runFirst = NaN
  for (let t = 0; t < s; t++) {
    const first = rows[2 * t]!
    const second = rows[2 * t + 1]!
    if (first !== runFirst) {
      if (runMin < closedMin) closedMin = runMin
      runFirst = first
      runMin = Infinity
    }
    if (second < runMin) runMin = second
    const k = vectorAt[t]!
    if (best >= 0 && bestSecond <= second) {
      status[k] = STATUS_DOMINATED
      witness[k] = vectorAt[best]!
      strictlyDominated[k] = closedMin < second ? 1 : 0
    }
    else {
      status[k] = STATUS_EFFICIENT
      best = t
      bestSecond = second
    }
  }
}

/**
 * p ≥ 3 Sort-Filter-Skyline (Chomicki et al. 2003). The key is the floating-point sum of the
 * scores: rounding is monotone, so a dominator's sum is never larger, and on equal sums the
 * lexicographic tie-break puts the dominator first. Hence each candidate needs testing only
 * against the window of efficient vectors already found, and whatever it finds is efficient.
 *
 * The window is a buffer of the latest WINDOW_BUFFER efficient vectors plus static k-d trees of
 * BUFFER·2^j vectors each, merged like a binary counter when the buffer fills (the "logarithmic
 * method" of Bentley & Saxe, "Decomposable searching problems I: static-to-dynamic
 * transformation", J. Algorithms 1980; "is the candidate dominated?" is an OR over the parts).
 * Every tree holds efficient vectors only, so its bounds stay tight however many dominated rows
 * pass by. The largest (oldest, lowest-sum) tree is asked first since it dominates the most.
 */
function sortFilterSkyline(
  canon: Float64Array,
  p: number,
  reps: Int32Array,
  survivors: Int32Array,
  status: Uint8Array,
  witness: Int32Array,
  strictlyDominated: Uint8Array,
): void {
  const s = survivors.length
  const { rows, vectorAt } = sortedCopy(canon, p, reps, survivors, sumKeys(canon, p, reps, survivors))
  const buffer = new Int32Array(WINDOW_BUFFER)
  let buffered = 0
  const levels: (DominanceTree | null)[] = []
  for (let t = 0; t < s; t++) {
    const off = t * p
    let found = -1
    for (let j = levels.length - 1; j >= 0 && found < 0; j--) {
      const tree = levels[j]
      if (tree) found = findDominator(tree, rows, off)
    }
    for (let b = 0; b < buffered && found < 0; b++) {
      if (noWorseEverywhere(rows, buffer[b]! * p, off, p)) found = buffer[b]!
    }
    const k = vectorAt[t]!
    if (found >= 0) {
      status[k] = STATUS_DOMINATED
      witness[k] = vectorAt[found]!
      strictlyDominated[k] = strictlyBetter(rows, found * p, off, p) ? 1 : 0
      continue
    }
    status[k] = STATUS_EFFICIENT
    buffer[buffered++] = t
    if (buffered === WINDOW_BUFFER && t + 1 < s) {
      mergeLevels(rows, p, buffer, levels)
      buffered = 0
    }
  }
}

/** Binary-counter step of the logarithmic method: the full buffer and every tree below the first gap become one tree. */
function mergeLevels(rows: Float64Array, p: number, buffer: Int32Array, levels: (DominanceTree | null)[]): void {
  let j = 0
  let size = buffer.length
  while (j < levels.length && levels[j]) {
    size += levels[j]!.ids.length
    j++
  }
  const ids = new Int32Array(size)
  ids.set(buffer)
  let at = buffer.length
  for (let lower = 0; lower < j; lower++) {
    ids.set(levels[lower]!.ids, at)
    at += levels[lower]!.ids.length
    levels[lower] = null
  }
  levels[j] = buildTree(rows, p, ids)
}

/** Sum of each survivor's scores, starting from +0 so that no key is −0. */
function sumKeys(canon: Float64Array, p: number, reps: Int32Array, survivors: Int32Array): Float64Array {
  const key = new Float64Array(survivors.length)
  for (let k = 0; k < survivors.length; k++) {
    const base = reps[survivors[k]!]! * p
    let sum = 0
    for (let d = 0; d < p; d++) sum += canon[base + d]!
    key[k] = sum
  }
  return key
}

function strictlyBetter(a: Float64Array, offA: number, offB: number, p: number): boolean {
  for (let d = 0; d < p; d++) if (!(a[offA + d]! < a[offB + d]!)) return false
  return true
}

/**
 * Turns `strictlyDominated` (1 = known strictly dominated) into the final "strictly dominated"
 * flag for every dominated vector, testing only the efficient vectors. That suffices: if any
 * considered r is strictly better than x everywhere, then either r is efficient or some
 * efficient e dominates r (the set is finite and dominance is transitive and acyclic); e ≤ r < x
 * on every criterion, so e is strictly better than x too. The converse is immediate. Callers read
 * "weakly efficient" as "efficient, or dominated but not strictly dominated".
 */
function markWeaklyEfficient(
  canon: Float64Array,
  p: number,
  reps: Int32Array,
  status: Uint8Array,
  strictlyDominated: Uint8Array,
  noStrictDominance: boolean,
): void {
  const m = reps.length
  let pendingCount = 0
  let frontCount = 0
  for (let k = 0; k < m; k++) {
    if (status[k] === STATUS_EFFICIENT) frontCount++
    else if (strictlyDominated[k] === 0) pendingCount++
  }
  // A criterion equal for every vector leaves no room for strict dominance.
  if (pendingCount === 0 || noStrictDominance) return
  const frontRows = new Int32Array(frontCount)
  let f = 0
  for (let k = 0; k < m; k++) if (status[k] === STATUS_EFFICIENT) frontRows[f++] = reps[k]!
  const tree = frontCount > TREE_MIN_FRONT ? buildTree(canon, p, frontRows) : null
  let lastHit = -1
  for (let k = 0; k < m; k++) {
    if (status[k] !== STATUS_DOMINATED || strictlyDominated[k] === 1) continue
    const off = reps[k]! * p
    if (lastHit >= 0 && strictlyBetter(canon, lastHit * p, off, p)) {
      strictlyDominated[k] = 1
      continue
    }
    let hit = -1
    if (tree !== null) hit = findStrictDominator(tree, canon, off)
    else {
      for (let e = 0; e < frontCount && hit < 0; e++) {
        if (strictlyBetter(canon, frontRows[e]! * p, off, p)) hit = frontRows[e]!
      }
    }
    if (hit >= 0) {
      strictlyDominated[k] = 1
      lastHit = hit
    }
  }
}

/**
 * Static k-d tree (Bentley 1975) over a set of points, each node carrying the per-criterion
 * minimum ("ideal point") and maximum ("nadir point") of its points, as in the ND-Tree of
 * Jaszkiewicz & Lust (IEEE TEVC 2018): a subtree whose ideal point is worse than the query
 * somewhere holds no dominator; one whose nadir point is no worse anywhere holds only dominators.
 * Leaves keep their points' coordinates contiguous.
 */
interface DominanceTree {
  p: number
  /** point id (offset / p in the source matrix) of each slot */
  ids: Int32Array
  /** coordinates in slot order */
  coords: Float64Array
  start: Int32Array
  end: Int32Array
  /** left child, −1 for a leaf; the right child is always left + 1 */
  left: Int32Array
  ideal: Float64Array
  nadir: Float64Array
  stack: Int32Array
  query: Float64Array
}

/** Builds the tree over the rows `ids` of `source` (row-major, p columns). O(size·p·log size). */
function buildTree(source: Float64Array, p: number, ids: Int32Array): DominanceTree {
  const size = ids.length
  const maxNodes = 2 * Math.ceil(size / Math.floor((LEAF_SIZE + 1) / 2)) + 1
  const points = new Float64Array(size * p)
  for (let i = 0; i < size; i++) {
    const from = ids[i]! * p
    for (let d = 0; d < p; d++) points[i * p + d] = source[from + d]!
  }
  const perm = new Int32Array(size)
  for (let i = 0; i < size; i++) perm[i] = i
  const start = new Int32Array(maxNodes)
  const end = new Int32Array(maxNodes)
  const left = new Int32Array(maxNodes).fill(-1)
  const depth = new Int32Array(maxNodes)

  // Spreads are compared relative to each criterion's full range, so units do not matter.
  const lo = new Float64Array(p).fill(Infinity)
  const hi = new Float64Array(p).fill(-Infinity)
  for (let i = 0; i < size * p; i += p) {
    for (let d = 0; d < p; d++) {
      const v = points[i + d]!
      if (v < lo[d]!) lo[d] = v
      if (v > hi[d]!) hi[d] = v
    }
  }
  const inverseRange = new Float64Array(p)
  for (let d = 0; d < p; d++) inverseRange[d] = hi[d]! > lo[d]! ? 1 / (hi[d]! / 2 - lo[d]! / 2) : 0

  let nodeCount = 1
  end[0] = size
  let deepest = 0
  const pending = new Int32Array(maxNodes)
  let top = 0
  pending[top++] = 0
  while (top > 0) {
    const node = pending[--top]!
    const from = start[node]!
    const to = end[node]!
    if (to - from <= LEAF_SIZE) continue
    lo.fill(Infinity)
    hi.fill(-Infinity)
    for (let slot = from; slot < to; slot++) {
      const base = perm[slot]! * p
      for (let d = 0; d < p; d++) {
        const v = points[base + d]!
        if (v < lo[d]!) lo[d] = v
        if (v > hi[d]!) hi[d] = v
      }
    }
    let axis = 0
    let widest = -1
    for (let d = 0; d < p; d++) {
      const spread = (hi[d]! / 2 - lo[d]! / 2) * inverseRange[d]!
      if (spread > widest) {
        widest = spread
        axis = d
      }
    }
    const mid = (from + to) >>> 1
    selectNth(perm, points, p, axis, from, to - 1, mid)
    const l = nodeCount
    nodeCount += 2
    start[l] = from
    end[l] = mid
    start[l + 1] = mid
    end[l + 1] = to
    left[node] = l
    depth[l] = depth[node]! + 1
    depth[l + 1] = depth[l]!
    if (depth[l]! > deepest) deepest = depth[l]!
    pending[top++] = l + 1
    pending[top++] = l
  }

  const slotIds = new Int32Array(size)
  const coords = new Float64Array(size * p)
  for (let slot = 0; slot < size; slot++) {
    const point = perm[slot]!
    slotIds[slot] = ids[point]!
    for (let d = 0; d < p; d++) coords[slot * p + d] = points[point * p + d]!
  }
  // Children always have larger numbers than their parent, so one backward sweep fills the bounds.
  const ideal = new Float64Array(nodeCount * p)
  const nadir = new Float64Array(nodeCount * p)
  for (let node = nodeCount - 1; node >= 0; node--) {
    const base = node * p
    const l = left[node]!
    if (l >= 0) {
      for (let d = 0; d < p; d++) {
        ideal[base + d] = Math.min(ideal[l * p + d]!, ideal[(l + 1) * p + d]!)
        nadir[base + d] = Math.max(nadir[l * p + d]!, nadir[(l + 1) * p + d]!)
      }
      continue
    }
    for (let d = 0; d < p; d++) {
      ideal[base + d] = Infinity
      nadir[base + d] = -Infinity
    }
    for (let slot = start[node]!; slot < end[node]!; slot++) {
      for (let d = 0; d < p; d++) {
        const v = coords[slot * p + d]!
        if (v < ideal[base + d]!) ideal[base + d] = v
        if (v > nadir[base + d]!) nadir[base + d] = v
      }
    }
  }
  return {
    p,
    ids: slotIds,
    coords,
    start: start.subarray(0, nodeCount),
    end: end.subarray(0, nodeCount),
    left: left.subarray(0, nodeCount),
    ideal,
    nadir,
    // Depth-first search keeps at most one pending sibling per level.
    stack: new Int32Array(deepest + 2),
    query: new Float64Array(p),
  }
}

/** Reorders perm[from..to] so that perm[nth] holds the point whose `axis` coordinate ranks there (Hoare quickselect). */
function selectNth(perm: Int32Array, points: Float64Array, p: number, axis: number, from: number, to: number, nth: number): void {
  let l = from
  let r = to
  while (r > l) {
    const a = points[perm[l]! * p + axis]!
    const b = points[perm[(l + r) >>> 1]! * p + axis]!
    const c = points[perm[r]! * p + axis]!
    const pivot = a < b ? (b < c ? b : a < c ? c : a) : (a < c ? a : b < c ? c : b)
    let i = l
    let j = r
    while (i <= j) {
      while (points[perm[i]! * p + axis]! < pivot) i++
      while (points[perm[j]! * p + axis]! > pivot) j--
      if (i <= j) {
        const swap = perm[i]!
        perm[i] = perm[j]!
        perm[j] = swap
        i++
        j--
      }
    }
    if (nth <= j) r = j
    else if (nth >= i) l = i
    else break
  }
}

/**
 * Id of a tree point no worse than the query (row `off / p` of `source`) on every criterion, or
 * −1. The caller guarantees the query is not in the tree and all vectors are distinct, so such a
 * point dominates it.
 */
function findDominator(tree: DominanceTree, source: Float64Array, off: number): number {
  const { p, coords, ideal, nadir, left, start, end, stack, query } = tree
  for (let d = 0; d < p; d++) query[d] = source[off + d]!
  let top = 0
  stack[top++] = 0
  while (top > 0) {
    const node = stack[--top]!
    const base = node * p
    let d = 0
    while (d < p && ideal[base + d]! <= query[d]!) d++
    if (d < p) continue
    d = 0
    while (d < p && nadir[base + d]! <= query[d]!) d++
    if (d === p) return tree.ids[start[node]!]!
    const l = left[node]!
    if (l >= 0) {
      // Visit the lower half first: dominators have small coordinates.
      stack[top++] = l + 1
      stack[top++] = l
      continue
    }
    for (let slot = start[node]!, stop = end[node]!; slot < stop; slot++) {
      const so = slot * p
      d = 0
      while (d < p && coords[so + d]! <= query[d]!) d++
      if (d === p) return tree.ids[slot]!
    }
  }
  return -1
}

/** Id of a tree point strictly better than the query on every criterion, or −1. */
function findStrictDominator(tree: DominanceTree, source: Float64Array, off: number): number {
  const { p, coords, ideal, nadir, left, start, end, stack, query } = tree
  for (let d = 0; d < p; d++) query[d] = source[off + d]!
  let top = 0
  stack[top++] = 0
  while (top > 0) {
    const node = stack[--top]!
    const base = node * p
    let d = 0
    while (d < p && ideal[base + d]! < query[d]!) d++
    if (d < p) continue
    d = 0
    while (d < p && nadir[base + d]! < query[d]!) d++
    if (d === p) return tree.ids[start[node]!]!
    const l = left[node]!
    if (l >= 0) {
      stack[top++] = l + 1
      stack[top++] = l
      continue
    }
    for (let slot = start[node]!, stop = end[node]!; slot < stop; slot++) {
      const so = slot * p
      d = 0
      while (d < p && coords[so + d]! < query[d]!) d++
      if (d === p) return tree.ids[slot]!
    }
  }
  return -1
}

/**
 * Plain O(n²·p) version of `paretoSets` with the same contract, straight from the definitions
 * (weak efficiency tested against every considered row, not only the efficient ones). Kept as
 * the reference for tests and the benchmark; use `paretoSets` in the product.
 */
export function paretoSetsReference(canon: Float64Array, n: number, p: number, consider?: Uint8Array): ParetoSets {
  checkInputs(canon, n, p, consider)
  const sets = emptySets(n)
  const { efficient, weaklyEfficient, dominator, duplicateOf } = sets
  const considered = (i: number): boolean => consider === undefined || consider[i] === 1
  for (let i = 0; i < n; i++) {
    if (!considered(i)) continue
    for (let d = 0; d < p; d++) {
      const v = canon[i * p + d]!
      if (!Number.isFinite(v)) throw nonFinite(i, d, v)
    }
  }
  for (let i = 0; i < n; i++) {
    if (!considered(i)) continue
    duplicateOf[i] = i
    for (let j = 0; j < i; j++) {
      if (considered(j) && rowsEqual(canon, j * p, i * p, p)) {
        duplicateOf[i] = j
        break
      }
    }
  }
  for (let i = 0; i < n; i++) {
    if (!considered(i)) continue
    let dominated = false
    let strict = false
    for (let j = 0; j < n && !(dominated && strict); j++) {
      if (!considered(j)) continue
      if (!dominated && dominates(canon, p, j, i)) dominated = true
      if (!strict && strictlyDominates(canon, p, j, i)) strict = true
    }
    efficient[i] = dominated ? 0 : 1
    weaklyEfficient[i] = strict ? 0 : 1
    if (!dominated) sets.efficientCount++
  }
  for (let i = 0; i < n; i++) {
    if (!considered(i) || efficient[i] === 1) continue
    for (let j = 0; j < n; j++) {
      if (efficient[j] === 1 && dominates(canon, p, j, i)) {
        dominator[i] = j
        break
      }
    }
  }
  return sets
}
