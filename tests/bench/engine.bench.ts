/**
 * Speed and memory of the Pareto core (shared/utils/pareto.ts): `npm run bench` (full grid, about
 * 5–10 minutes on 2 cores) or `npm run bench -- --quick` (the target cells and a small grid).
 *
 * Every cell runs in its own child process, so its peak RSS is its own. A cell times
 * `paretoSets(canon, n, p)` on an already canonical matrix (all criteria minimised), after a
 * warm-up (5 runs on a small matrix of the same shape, plus one untimed full-size run when the cell
 * has 3 runs or more) so the JIT is ready, as in a running server that recomputes on every edit.
 *
 * Data (seeded mulberry32 PRNG, so every run sees the same numbers):
 *  - uniform: every score independent U[0,1).
 *  - correlated: a common factor t ~ U[0,1), score = 0.7·t + 0.3·U[0,1); small fronts.
 *  - anti-correlated: u ~ U[0,1)^p moved onto the plane Σx = p·c, score = u_d − mean(u) + c with
 *    c = 0.5 + 0.05·(U+U+U+U − 2); large fronts. The idea (points near a plane Σx = const)
 *    follows the anti-correlated generator of Börzsönyi, Kossmann & Stocker, "The Skyline
 *    Operator", ICDE 2001.
 *
 * Columns: median wall time of the runs; median CPU time of the same runs (the process's, all
 * threads; when it is far below the wall time, other load on the machine slowed the cell); front
 * size; ns per score (median / (n·p)); how many times faster than paretoSetsReference (O(n²·p),
 * same process, same data; only n ≤ 10k) and
 * than DEAP's tools.sortLogNondominated (Debian python3-deap, first_front_only=True, data handed
 * over in a temp file, timed inside Python with time.perf_counter around the call alone; only
 * n ≤ 10k plus a dedicated 20k × 4 uniform row); peak RSS of the cell's process. Both references
 * must return the same efficient set, or the bench fails.
 *
 * Acceptability rows (shared/utils/acceptability.ts, SMAA-2): `acceptability(table, { samples })`
 * on 100 efficient alternatives × 6 criteria (points of the positive unit sphere, maximised, so
 * none dominates another), 10,000 weight draws, by weighted sum and by reference point; the
 * "front" column is the number of efficient alternatives and "ns/score" is per draw, alternative
 * and criterion. `--acceptability` runs only these rows.
 *
 * Not run: no cell of the grid is skipped; the reference is left out above 10k rows (10^10 pair
 * tests at 100k) and DEAP above 10k rows (pure Python: 0.4–3.5 s per cell at 10k here, so, by
 * estimate, about a minute or more per cell at 100k). Runs per cell:
 * 31 at 1k rows, 11 at 10k, 5 at 100k, 3 at 1M, 1 for anti-correlated 1M with p ≥ 6 (10–60 s
 * each, fronts of 10^5–10^6 rows, no full-size warm-up).
 */
import { spawnSync } from 'node:child_process'
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { cpus, loadavg, tmpdir } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import { acceptability, mulberry32, type AcceptabilityModel } from '../../shared/utils/acceptability'
import { normaliseTable } from '../../shared/utils/normalise'
import { paretoSets, paretoSetsReference } from '../../shared/utils/pareto'

const SHAPES = ['uniform', 'correlated', 'anti-correlated'] as const
type Shape = (typeof SHAPES)[number]

const SELF = fileURLToPath(import.meta.url)
const DEAP_SCRIPT = fileURLToPath(new URL('../reference/deap_front.py', import.meta.url))
const PYTHON = '/usr/bin/python3'
const CELL_TIMEOUT_MS = 400_000

interface Cell {
  shape: Shape
  n: number
  p: number
  runs: number
  reference: boolean
  deap: boolean
  /** DEAP repetitions (median taken inside Python). */
  deapRuns: number
  /** Set for an acceptability (SMAA-2) cell: the ranking model, with `samples` weight draws. */
  smaa?: AcceptabilityModel
  samples?: number
}

interface CellResult {
  cell: Cell
  medianMs: number
  /** Median CPU time of the cell's process over the same runs (all its threads, so it can exceed wall time). */
  medianCpuMs: number
  front: number
  referenceMs: number | null
  deapMs: number | null
  peakRssBytes: number
  note: string
}

function prng(seed: number): () => number {
  let state = seed >>> 0
  return () => {
    state = (state + 0x6d2b79f5) >>> 0
    let t = state
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

function generate(shape: Shape, n: number, p: number, seed: number): Float64Array {
  const random = prng(seed)
  const canon = new Float64Array(n * p)
  for (let i = 0; i < n; i++) {
    const base = i * p
    if (shape === 'uniform') {
      for (let d = 0; d < p; d++) canon[base + d] = random()
    }
    else if (shape === 'correlated') {
      const t = random()
      for (let d = 0; d < p; d++) canon[base + d] = 0.7 * t + 0.3 * random()
    }
    else {
      const c = 0.5 + 0.05 * (random() + random() + random() + random() - 2)
      let sum = 0
      for (let d = 0; d < p; d++) {
        const u = random()
        canon[base + d] = u
        sum += u
      }
      for (let d = 0; d < p; d++) canon[base + d] = canon[base + d]! - sum / p + c
    }
  }
  return canon
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b)
  const mid = sorted.length >> 1
  return sorted.length % 2 === 1 ? sorted[mid]! : (sorted[mid - 1]! + sorted[mid]!) / 2
}

function efficientIndices(efficient: Uint8Array): number[] {
  const out: number[] = []
  efficient.forEach((flag, i) => {
    if (flag === 1) out.push(i)
  })
  return out
}

function sameList(a: number[], b: number[]): boolean {
  return a.length === b.length && a.every((v, i) => v === b[i])
}

/** An acceptability cell: n points of the positive unit sphere in p dimensions (all efficient), `samples` draws. */
function runAcceptabilityCell(cell: Cell): CellResult {
  const { n, p } = cell
  const random = mulberry32(n * 31 + p)
  const raw = new Float64Array(n * p)
  for (let i = 0; i < n; i++) {
    let squares = 0
    for (let k = 0; k < p; k++) {
      raw[i * p + k] = random() + 1e-3
      squares += raw[i * p + k]! ** 2
    }
    for (let k = 0; k < p; k++) raw[i * p + k] = raw[i * p + k]! / Math.sqrt(squares)
  }
  const canon = raw.map(x => -x)
  const sets = paretoSets(canon, n, p)
  const best = new Float64Array(p).fill(-Infinity)
  const worst = new Float64Array(p).fill(Infinity)
  for (let i = 0; i < n * p; i++) {
    best[i % p] = Math.max(best[i % p]!, raw[i]!)
    worst[i % p] = Math.min(worst[i % p]!, raw[i]!)
  }
  const ids = Array.from({ length: n }, (_, i) => `a${i}`)
  const table = normaliseTable(Array.from({ length: p }, (_, k) => `c${k}`), new Array(p).fill('max'), ids, raw, best, worst)
  const options = { model: cell.smaa, samples: cell.samples, seed: 1 }
  for (let k = 0; k < 3; k++) acceptability(table, { ...options, samples: 1000 })
  const times: number[] = []
  const cpuTimes: number[] = []
  for (let r = 0; r < cell.runs; r++) {
    const cpuStart = process.cpuUsage()
    const start = performance.now()
    acceptability(table, options)
    times.push(performance.now() - start)
    const cpu = process.cpuUsage(cpuStart)
    cpuTimes.push((cpu.user + cpu.system) / 1000)
  }
  const peakRssBytes = process.resourceUsage().maxRSS * 1024
  return { cell, medianMs: median(times), medianCpuMs: median(cpuTimes), front: sets.efficientCount, referenceMs: null, deapMs: null, peakRssBytes, note: `${cell.samples} draws` }
}

/** Runs one cell in this process; the parent reads the JSON line it prints. */
function runCell(cell: Cell): CellResult {
  if (cell.smaa !== undefined) return runAcceptabilityCell(cell)
  const { shape, n, p } = cell
  const seed = (SHAPES.indexOf(shape) + 1) * 1_000_003 + n * 31 + p
  if (n > 0) {
    const warm = Math.min(n, 20_000)
    const warmData = generate(shape, warm, p, seed + 1)
    for (let k = 0; k < 5; k++) paretoSets(warmData, warm, p)
  }
  const canon = generate(shape, n, p, seed)
  const times: number[] = []
  const cpuTimes: number[] = []
  // One untimed run at full size too (V8 optimises the long loops on their first long run).
  let sets = n > 0 && cell.runs >= 3 ? paretoSets(canon, n, p) : paretoSets(new Float64Array(0), 0, Math.max(p, 1))
  for (let r = 0; r < cell.runs; r++) {
    const cpuStart = process.cpuUsage()
    const start = performance.now()
    sets = paretoSets(canon, n, p)
    times.push(performance.now() - start)
    const cpu = process.cpuUsage(cpuStart)
    cpuTimes.push((cpu.user + cpu.system) / 1000)
  }
  const ours = efficientIndices(sets.efficient)
  const notes: string[] = []

  let referenceMs: number | null = null
  if (cell.reference) {
    const referenceTimes: number[] = []
    let reference = sets
    for (let r = 0; r < (n <= 1000 ? 5 : 1); r++) {
      const start = performance.now()
      reference = paretoSetsReference(canon, n, p)
      referenceTimes.push(performance.now() - start)
    }
    referenceMs = median(referenceTimes)
    if (!sameList(ours, efficientIndices(reference.efficient))) notes.push('MISMATCH with paretoSetsReference')
  }
  const peakRssBytes = process.resourceUsage().maxRSS * 1024

  let deapMs: number | null = null
  if (cell.deap) {
    const dir = mkdtempSync(join(tmpdir(), 'counterpoise-bench-'))
    try {
      const file = join(dir, 'case.json')
      writeFileSync(file, JSON.stringify({
        cases: [{ n, p, directions: new Array(p).fill('min'), scores: Array.from(canon), repeat: cell.deapRuns }],
      }))
      const run = spawnSync(PYTHON, [DEAP_SCRIPT, file], { encoding: 'utf8', maxBuffer: 256 * 1024 * 1024, timeout: 300_000 })
      if (run.status === 0) {
        const answer = JSON.parse(run.stdout) as { results: { front: number[], seconds: number }[] }
        deapMs = answer.results[0]!.seconds * 1000
        if (!sameList(ours, answer.results[0]!.front)) notes.push('MISMATCH with DEAP')
      }
      else notes.push(`DEAP failed: ${(run.error?.message ?? run.stderr).trim().split('\n').pop()}`)
    }
    finally {
      rmSync(dir, { recursive: true, force: true })
    }
  }
  return { cell, medianMs: median(times), medianCpuMs: median(cpuTimes), front: sets.efficientCount, referenceMs, deapMs, peakRssBytes, note: notes.join('; ') }
}

function spawnCell(cell: Cell): CellResult | string {
  const run = spawnSync(process.execPath, [...process.execArgv, SELF, '--cell', JSON.stringify(cell)], {
    encoding: 'utf8',
    maxBuffer: 64 * 1024 * 1024,
    timeout: CELL_TIMEOUT_MS,
  })
  if (run.status !== 0) {
    return run.error?.message ?? `exit ${run.status}: ${run.stderr.trim().split('\n').slice(-3).join(' | ')}`
  }
  const line = run.stdout.trim().split('\n').pop() ?? ''
  return JSON.parse(line) as CellResult
}

function formatCount(n: number): string {
  if (n >= 1_000_000 && n % 1_000_000 === 0) return `${n / 1_000_000}M`
  if (n >= 1000 && n % 1000 === 0) return `${n / 1000}k`
  return String(n)
}

function formatMs(ms: number): string {
  if (ms >= 10_000) return `${(ms / 1000).toFixed(1)} s`
  if (ms >= 100) return `${ms.toFixed(0)} ms`
  if (ms >= 1) return `${ms.toFixed(2)} ms`
  return `${(ms * 1000).toFixed(0)} µs`
}

function formatRatio(ratio: number | null): string {
  if (ratio === null) return '—'
  return ratio >= 100 ? `${ratio.toFixed(0)}×` : `${ratio.toFixed(1)}×`
}

const COLUMNS: [string, number][] = [
  ['shape', 15], ['n', 5], ['p', 2], ['runs', 4], ['median', 9], ['CPU', 9], ['front', 8], ['ns/score', 8],
  ['× ref', 7], ['× DEAP', 7], ['peak RSS', 9], ['note', 0],
]

function printRow(values: string[]): void {
  console.log(values.map((v, k) => {
    const width = COLUMNS[k]![1]
    return k === 0 || k === values.length - 1 ? v.padEnd(width) : v.padStart(width)
  }).join('  ').trimEnd())
}

const SMAA_CELLS: Cell[] = (['weighted-sum', 'reference-point'] as const).map(smaa => (
  { shape: 'uniform', n: 100, p: 6, runs: 11, reference: false, deap: false, deapRuns: 0, smaa, samples: 10_000 }))

function gridCells(quick: boolean, onlyAcceptability: boolean): Cell[] {
  if (onlyAcceptability) return [...SMAA_CELLS]
  const cells: Cell[] = []
  const sizes = quick ? [1000, 10_000] : [1000, 10_000, 100_000, 1_000_000]
  const dims = quick ? [2, 4, 6] : [2, 3, 4, 6, 8]
  for (const n of sizes) {
    for (const shape of SHAPES) {
      for (const p of dims) {
        const runs = n <= 1000 ? 31 : n <= 10_000 ? 11 : n <= 100_000 ? 5 : shape === 'anti-correlated' && p >= 6 ? 1 : 3
        cells.push({ shape, n, p, runs, reference: n <= 10_000, deap: n <= 10_000, deapRuns: n <= 1000 ? 5 : 1 })
      }
    }
  }
  // The target cells, when the quick grid does not hold them already.
  cells.push({ shape: 'uniform', n: 20_000, p: 4, runs: 11, reference: false, deap: true, deapRuns: 3 })
  if (quick) {
    cells.push({ shape: 'anti-correlated', n: 100_000, p: 6, runs: 3, reference: false, deap: false, deapRuns: 0 })
    cells.push({ shape: 'uniform', n: 1_000_000, p: 4, runs: 3, reference: false, deap: false, deapRuns: 0 })
  }
  cells.push(...SMAA_CELLS)
  return cells
}

function main(): void {
  const cellArg = process.argv.indexOf('--cell')
  if (cellArg >= 0) {
    console.log(JSON.stringify(runCell(JSON.parse(process.argv[cellArg + 1]!) as Cell)))
    return
  }
  const quick = process.argv.includes('--quick')
  const onlyAcceptability = process.argv.includes('--acceptability')
  const began = performance.now()
  const deapVersion = spawnSync(PYTHON, ['-c', 'import deap; print(deap.__version__)'], { encoding: 'utf8' })
  console.log(`Pareto core benchmark${quick ? ' (--quick)' : ''}: node ${process.version}, ${cpus().length} × ${cpus()[0]?.model ?? 'cpu'}, `
    + `load average ${loadavg().map(v => v.toFixed(2)).join(' ')}, DEAP ${deapVersion.status === 0 ? deapVersion.stdout.trim() : 'not importable'}`)
  console.log('Times are wall clock and include any other load on the machine.\n')

  const baseline = spawnCell({ shape: 'uniform', n: 0, p: 1, runs: 1, reference: false, deap: false, deapRuns: 0 })
  const baselineRss = typeof baseline === 'string' ? 0 : baseline.peakRssBytes

  printRow(COLUMNS.map(([name]) => name))
  const results: CellResult[] = []
  let failures = 0
  const label = (cell: Cell) => (cell.smaa === undefined ? cell.shape : cell.smaa === 'weighted-sum' ? 'SMAA-2 sum' : 'SMAA-2 ref-pt')
  for (const cell of gridCells(quick, onlyAcceptability)) {
    const result = spawnCell(cell)
    if (typeof result === 'string') {
      failures++
      printRow([label(cell), formatCount(cell.n), String(cell.p), String(cell.runs), '—', '—', '—', '—', '—', '—', '—', `FAILED: ${result}`])
      continue
    }
    results.push(result)
    if (result.note.includes('MISMATCH') || result.note.includes('failed')) failures++
    const { medianMs, referenceMs, deapMs } = result
    printRow([
      label(cell),
      formatCount(cell.n),
      String(cell.p),
      String(cell.runs),
      formatMs(medianMs),
      formatMs(result.medianCpuMs),
      String(result.front),
      (medianMs * 1e6 / (cell.n * cell.p * (cell.samples ?? 1))).toFixed(1),
      formatRatio(referenceMs === null ? null : referenceMs / medianMs),
      formatRatio(deapMs === null ? null : deapMs / medianMs),
      `${(result.peakRssBytes / 2 ** 20).toFixed(0)} MB`,
      result.note,
    ])
  }

  const find = (shape: Shape, n: number, p: number) => results.find(r => r.cell.smaa === undefined && r.cell.shape === shape && r.cell.n === n && r.cell.p === p)
  const verdict = (ok: boolean | null) => (ok === null ? 'N/A ' : ok ? 'PASS' : 'MISS')
  // Judged on wall time, as asked; CPU time is shown so that a miss caused by other load is visible.
  const timed = (r: CellResult | undefined) => (r ? `${formatMs(r.medianMs)} (CPU ${formatMs(r.medianCpuMs)})` : 'not run')
  console.log(`\nTargets (baseline RSS of an empty cell process: ${(baselineRss / 2 ** 20).toFixed(0)} MB)`)
  for (const model of ['weighted-sum', 'reference-point'] as const) {
    const smaa = results.find(r => r.cell.smaa === model)
    console.log(`  ${verdict(smaa ? smaa.medianMs < 1000 : null)}  acceptability (${model}) 10k draws × 100 efficient × 6 under 1 s: ${timed(smaa)}`)
  }
  const big = find('uniform', 1_000_000, 4)
  console.log(`  ${verdict(big ? big.medianMs < 400 : null)}  1M × 4 uniform under 400 ms: ${timed(big)}`)
  const anti = find('anti-correlated', 100_000, 6)
  console.log(`  ${verdict(anti ? anti.medianMs < 3000 : null)}  100k × 6 anti-correlated under 3 s: ${timed(anti)}`)
  const versus = find('uniform', 20_000, 4)
  const speedup = versus?.deapMs != null ? versus.deapMs / versus.medianMs : null
  console.log(`  ${verdict(speedup === null ? null : speedup >= 200)}  20k × 4 uniform at least 200× faster than DEAP sortLogNondominated: `
    + (versus && speedup !== null ? `${formatRatio(speedup)} (${formatMs(versus.medianMs)} vs ${formatMs(versus.deapMs!)})` : 'not measured'))

  // O(n·p) memory: the extra RSS of a cell over an empty process, per byte of input matrix, must stay
  // bounded (≤ 10 here) at the largest n, and grow about linearly from 100k to 1M rows.
  const pareto = results.filter(r => r.cell.smaa === undefined)
  const largest = Math.max(...pareto.map(r => r.cell.n))
  const perInput = pareto.filter(r => r.cell.n === largest).map(r => ({
    r,
    ratio: (r.peakRssBytes - baselineRss) / (r.cell.n * r.cell.p * 8),
  }))
  const worst = perInput.reduce<(typeof perInput)[number] | null>((a, b) => (a === null || b.ratio > a.ratio ? b : a), null)
  const growth: number[] = []
  for (const r of results.filter(x => x.cell.n === 1_000_000)) {
    const small = find(r.cell.shape, 100_000, r.cell.p)
    if (small) growth.push((r.peakRssBytes - baselineRss) / Math.max(small.peakRssBytes - baselineRss, 1))
  }
  const worstGrowth = growth.length > 0 ? Math.max(...growth) : null
  const memoryOk = worst !== null && worst.ratio <= 10 && (worstGrowth === null || worstGrowth <= 15)
  console.log(`  ${verdict(worst === null ? null : memoryOk)}  memory O(n·p): at n = ${formatCount(largest)} peak RSS − baseline ≤ 10 × input bytes `
    + `(worst ${worst ? `${worst.ratio.toFixed(1)}×, ${worst.r.cell.shape} p=${worst.r.cell.p}: ${((worst.r.peakRssBytes - baselineRss) / 2 ** 20).toFixed(0)} MB over ${(worst.r.cell.n * worst.r.cell.p * 8 / 2 ** 20).toFixed(0)} MB input` : '—'})`
    + (worstGrowth === null ? '' : `; 100k → 1M rows grows it ≤ 15× (worst ${worstGrowth.toFixed(1)}×)`))
  console.log(`\nTotal ${((performance.now() - began) / 1000).toFixed(0)} s, load average now ${loadavg().map(v => v.toFixed(2)).join(' ')}`)
  if (failures > 0) {
    console.error(`${failures} cell(s) failed or disagreed with a reference`)
    process.exitCode = 1
  }
}

main()
