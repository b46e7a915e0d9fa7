/**
 * Outside reference for the support LP: the same LP written in CPLEX LP format and solved by
 * GLPK's `glpsol` (GNU Linear Programming Kit, Debian package glpk-utils) with `--exact`, its
 * simplex in exact rational arithmetic (GNU MP). The doubles are written in their shortest
 * round-trip decimal form, so GLPK solves exactly the LP our code builds, and its optimum is
 * the true optimum for that data, free of floating-point error.
 *
 * Formulation as in shared/utils/supported.ts, but with t as a free variable (GLPK supports that
 * directly; our code shifts it because yalps has no free variables), so the two also differ in
 * how they are written.
 */
import { execFileSync } from 'node:child_process'
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'

/** Path of glpsol; throws with an install hint when it is missing (the check must fail, not skip). */
export function requireGlpsol(): string {
  try {
    return execFileSync('sh', ['-c', 'command -v glpsol'], { encoding: 'utf8' }).trim()
  }
  catch {
    throw new Error('glpsol (GLPK) is not installed; install it with `apt-get install -y glpk-utils`. The outside check of the support LP needs it.')
  }
}

function term(coefficient: number, variable: string): string {
  if (coefficient === 0) return ''
  return ` ${coefficient < 0 ? '-' : '+'} ${String(Math.abs(coefficient))} ${variable}`
}

/**
 * CPLEX LP text of: maximise t s.t. Σ_k w_k (a_k − b_k) − t ≥ 0 for every row b not identical to a,
 * Σ w = 1, w ≥ 0, t free. `values` is row-major n × p (normalised, best = 1).
 */
export function supportLp(values: ArrayLike<number>, n: number, p: number, index: number): string {
  const lines = [`\\* support of row ${index} *\\`, 'Maximize', ' margin: t', 'Subject To']
  for (let j = 0; j < n; j++) {
    let same = true
    for (let k = 0; k < p; k++) if (values[index * p + k] !== values[j * p + k]) same = false
    if (same) continue // identical rows (the row itself included) tie under every weighting
    let row = ''
    for (let k = 0; k < p; k++) row += term(values[index * p + k]! - values[j * p + k]!, `w${k}`)
    lines.push(` rival${j}:${row} - t >= 0`)
  }
  lines.push(` simplex:${Array.from({ length: p }, (_, k) => ` + w${k}`).join('')} = 1`)
  lines.push('Bounds', ' t free', 'End', '')
  return lines.join('\n')
}

/** Solves CPLEX LP text with `glpsol --exact`; returns the optimal objective. Throws unless optimal. */
export function solveExactly(lp: string): number {
  const glpsol = requireGlpsol()
  const dir = mkdtempSync(join(tmpdir(), 'glpk-'))
  try {
    const model = join(dir, 'model.lp')
    const solution = join(dir, 'solution.txt')
    writeFileSync(model, lp)
    execFileSync(glpsol, ['--lp', model, '--exact', '-w', solution], { stdio: 'pipe' })
    const text = readFileSync(solution, 'utf8')
    if (!/^c Status:\s+OPTIMAL/m.test(text)) throw new Error(`glpsol did not find an optimum:\n${text}`)
    // Plain-text solution format: "s bas ROWS COLS PRIM DUAL OBJ".
    const line = text.split('\n').find(l => l.startsWith('s bas '))
    if (line === undefined) throw new Error(`no solution line in glpsol output:\n${text}`)
    return Number(line.trim().split(/\s+/).at(-1))
  }
  finally {
    rmSync(dir, { recursive: true, force: true })
  }
}
