#!/usr/bin/env node
// `npm test`: the same set-up as `npm start`, against a throwaway PostgreSQL cluster, then every
// check: lint, type check, unit tests, server tests against the built server, end-to-end tests in
// Debian's Chromium. Ends with one line: `Summary: N passed, N failed`.
import { spawn } from 'node:child_process'
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs'
import { createServer } from 'node:net'
import process from 'node:process'
import { loadEnv } from './lib/env.mjs'
import { ensureCluster, stopCluster } from './lib/postgres.mjs'
import { ensureDebianPackages, log, run } from './lib/run.mjs'
import { ensureDependencies, ensureMail, migrateAndSeed } from './lib/setup.mjs'
import { ensureDevSigningCert } from './lib/signingCert.mjs'

process.chdir(new URL('..', import.meta.url).pathname)
// Steps to run, e.g. `npm test -- unit server`; arguments that are paths pick test files within
// those steps, e.g. `npm test -- server tests/server/crash.test.ts` or `npm test -- e2e tests/e2e/balance.spec.ts`.
const args = process.argv.slice(2)
const files = args.filter(a => a.includes('/') || /\.(test|spec)\.ts$/.test(a))
const only = args.filter(a => !files.includes(a))
const wanted = step => only.length === 0 || only.includes(step)
const filesFor = dir => files.filter(f => f.replace(/^\.\//, '').startsWith(dir))

/** Debian packages the tests use: the browser, and the outside references for the engine. */
const TEST_PACKAGES = ['chromium', 'python3-deap', 'glpk-utils', 'python3-scipy', 'poppler-utils', 'libnss3-tools', 'openssl']

const freePort = () => new Promise((resolve, reject) => {
  const probe = createServer()
  probe.once('error', reject)
  probe.listen(0, '127.0.0.1', () => {
    const { port } = probe.address()
    probe.close(() => resolve(port))
  })
})

function exec(cmd, args, env) {
  return new Promise((resolve) => {
    const child = spawn(cmd, args, { stdio: 'inherit', env })
    child.on('exit', code => resolve(code ?? 1))
  })
}

const tally = []
function record(name, passed, failed, note = '') {
  tally.push({ name, passed, failed, note })
  log(`${name}: ${passed} passed, ${failed} failed${note ? ` (${note})` : ''}`)
}

/** A runner's own counts from its JSON report; a crash before the report counts as one failure. */
function countsFrom(file, kind) {
  if (!existsSync(file)) return null
  const report = JSON.parse(readFileSync(file, 'utf8'))
  if (kind === 'vitest') return { passed: report.numPassedTests, failed: report.numFailedTests + (report.numRuntimeErrorTestSuites ?? 0) }
  return { passed: report.stats.expected + report.stats.flaky, failed: report.stats.unexpected }
}

async function check(name, cmd, args, env) {
  const code = await exec(cmd, args, env)
  record(name, code === 0 ? 1 : 0, code === 0 ? 0 : 1)
}

async function suite(name, kind, cmd, args, env, reportFile) {
  rmSync(reportFile, { force: true })
  const code = await exec(cmd, args, env)
  const counts = countsFrom(reportFile, kind)
  if (!counts) return record(name, 0, 1, `runner exited ${code} without a report`)
  // A runner that fails outside any test (set-up, no tests found) still fails the run.
  record(name, counts.passed, counts.failed + (code !== 0 && counts.failed === 0 ? 1 : 0), code !== 0 && counts.failed === 0 ? `runner exited ${code}` : '')
}

let dataDir
let server
let mail
try {
  ensureDependencies()
  if (!ensureDebianPackages(TEST_PACKAGES)) throw new Error(`the tests need the Debian packages ${TEST_PACKAGES.join(', ')}`)
  const env = { ...loadEnv(), CI: process.env.CI ?? '' }
  delete env.BASE_URL
  const signing = ensureDevSigningCert({ env })
  Object.assign(env, { COUNTERPOISE_SIGNING_P12: signing.p12Path, COUNTERPOISE_SIGNING_PASSPHRASE: signing.passphrase, COUNTERPOISE_SIGNING_CA: signing.caCertPath })
  if (env.TEST_DATABASE_URL) {
    env.DATABASE_URL = env.TEST_DATABASE_URL
  }
  else {
    // Never the development database: a cluster made for this run and removed after it.
    mkdirSync('/tmp', { recursive: true })
    dataDir = `${mkdtempSync('/tmp/counterpoise-test-')}/pg`
    env.DATABASE_URL = ensureCluster({ dataDir, port: await freePort(), throwaway: true })
  }
  migrateAndSeed(env)
  mkdirSync('.tmp', { recursive: true })
  // Tests read the mail the app sends from this run's own catcher.
  delete env.SMTP_URL
  mail = await ensureMail(env, { port: 0, dir: mkdtempSync('/tmp/counterpoise-mail-') })

  if (wanted('lint')) await check('lint (eslint)', 'npx', ['eslint', '.'], env)
  if (wanted('typecheck')) await check('type check (vue-tsc)', 'npx', ['nuxt', 'typecheck'], env)
  if (wanted('unit')) await suite('unit tests (vitest)', 'vitest', 'npx', ['vitest', 'run', '--project', 'unit', '--reporter=default', '--reporter=json', '--outputFile=.tmp/unit.json', ...filesFor('tests/unit')], env, '.tmp/unit.json')

  if (wanted('server') || wanted('e2e')) {
    log('building')
    run('npx', ['nuxt', 'build'], { env: { ...env, NODE_ENV: 'production' } })
    const port = await freePort()
    server = spawn(process.execPath, ['.output/server/index.mjs'], { stdio: ['ignore', 'ignore', 'inherit'], env: { ...env, NODE_ENV: 'production', NITRO_PORT: String(port), NITRO_HOST: '::' } })
    const baseUrl = `http://127.0.0.1:${port}`
    const deadline = Date.now() + 30_000
    for (;;) {
      const healthy = await fetch(`${baseUrl}/api/health`).then(r => r.ok, () => false)
      if (healthy) break
      if (Date.now() > deadline) throw new Error('the built server did not become healthy within 30 s')
      await new Promise(resolve => setTimeout(resolve, 200))
    }
    const testEnv = { ...env, BASE_URL: baseUrl }
    if (wanted('server')) await suite('server tests (vitest)', 'vitest', 'npx', ['vitest', 'run', '--project', 'server', '--reporter=default', '--reporter=json', '--outputFile=.tmp/server.json', ...filesFor('tests/server')], testEnv, '.tmp/server.json')
    if (wanted('e2e')) await suite('end-to-end tests (playwright, chromium)', 'playwright', 'npx', ['playwright', 'test', ...filesFor('tests/e2e')], { ...testEnv, PLAYWRIGHT_JSON: '.tmp/e2e.json' }, '.tmp/e2e.json')
  }
}
catch (error) {
  record('set-up', 0, 1, error.message)
}
finally {
  if (server && server.exitCode === null) {
    const exited = new Promise(resolve => server.once('exit', resolve))
    server.kill('SIGTERM')
    await exited
  }
  if (mail) {
    await mail.close()
    rmSync(mail.dir, { recursive: true, force: true })
  }
  if (dataDir) {
    stopCluster(dataDir, { remove: true })
    rmSync(dataDir.replace(/\/pg$/, ''), { recursive: true, force: true })
  }
}

const passed = tally.reduce((sum, t) => sum + t.passed, 0)
const failed = tally.reduce((sum, t) => sum + t.failed, 0)
console.log('')
for (const t of tally) console.log(`  ${t.failed ? '✗' : '✓'} ${t.name}: ${t.passed} passed, ${t.failed} failed${t.note ? ` — ${t.note}` : ''}`)
console.log(`Summary: ${passed} passed, ${failed} failed`)
process.exitCode = failed === 0 && passed > 0 ? 0 : 1
